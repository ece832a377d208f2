/**
 * Figures of the device edge (npm run bench:edge): generated bad input per transport (cases
 * tried), the PCD-01 decoder on 16k/32k/64k OBX rows (time and the longest event-loop stall, caps
 * raised so the whole message is decoded), and against a real gateway process: idle connections
 * held and closed, keyless 8 MB POSTs (bytes stored by strangers), /healthz during a 64k-OBX message.
 * Every answer is checked against what the edge must answer (the normal ORU AA, every keyless POST
 * 401 or cut off, the 64k-OBX message AR at the segment cap); any other answer fails the run (exit 1) after
 * the figures, so a figure never stands on answers it did not expect.
 */
import http from 'node:http';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { cpus, loadavg } from 'node:os';
import { decodePcd01, decodePcd01Async, PCD01_LIMITS } from '@ebbgate/gateway/ingest/hl7/pcd01';
import { startTestMariaDb } from '../../scripts/lib/test-mariadb';
import { fuzzInProcess } from '../src/security/fuzz-cases';
import { oru, Peer, readAck, registerMllpMonitor, startEdgeGateway } from '../src/security/edge-support';

const RUNS = Number(process.env.BENCH_FUZZ_RUNS ?? 100_000);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 1000);

function manyRows(rows: number, equipment = '02EB6AFFFE00EB01'): string {
  const t = '20261201090000.000+0000';
  const segs = [
    `MSH|^~\\&|BENCH^${equipment}^EUI-64|HGH|EBBGATE|HGH|${t}||ORU^R01^ORU_R01|bench-${rows}|P|2.6`,
    `OBR|1|||182777000^monitoring of patient^SCT|||${t}`,
    `OBX|1||69965^MDC_DEV_MON_PHYSIO_MULTI_PARAM_MDS^MDC|1.0.0.0|||||||X|||||||${equipment}^^${equipment}^EUI-64`,
  ];
  for (let i = 0; i < rows; i++)
    segs.push(
      `OBX|${i + 2}|NM|147842^MDC_ECG_HEART_RATE^MDC|1.1.${Math.floor(i / 1000) + 1}.${(i % 1000) + 1}|${60 + (i % 40)}|264864^MDC_DIM_BEAT_PER_MIN^MDC|||||R|||${t}`,
    );
  return segs.join('\r') + '\r';
}

async function decoderFigures(): Promise<void> {
  const limits = { ...PCD01_LIMITS, maxSegments: 100_000 };
  for (const rows of [16_384, 32_768, 65_536]) {
    const raw = Buffer.from(manyRows(rows));
    let t0 = performance.now();
    decodePcd01(raw, limits);
    const syncMs = performance.now() - t0;
    const h = monitorEventLoopDelay({ resolution: 1 });
    h.enable();
    t0 = performance.now();
    await decodePcd01Async(raw, limits);
    const asyncMs = performance.now() - t0;
    h.disable();
    console.log(
      `decoder ${rows} OBX rows (${(raw.length / 1e6).toFixed(1)} MB): ${syncMs.toFixed(0)} ms in one go; time-sliced ${asyncMs.toFixed(0)} ms, longest event-loop delay ${(h.max / 1e6).toFixed(1)} ms`,
    );
  }
}

function keylessPost(url: string, bytes: Buffer): Promise<number | string> {
  return new Promise((resolve) => {
    const u = new URL(`${url}/api/v1/ingest/batches`);
    const req = http.request(
      { host: u.hostname, port: u.port, path: u.pathname, method: 'POST', headers: { 'content-type': 'application/json', 'content-length': bytes.length } },
      (res) => {
        res.resume();
        res.on('end', () => resolve(res.statusCode ?? 0));
      },
    );
    req.on('error', (err: NodeJS.ErrnoException) => resolve(err.code ?? 'error'));
    req.end(bytes);
  });
}

/** Answers that were not the expected ones, in words; main fails the run on any. */
const unexpected: string[] = [];

async function gatewayFigures(): Promise<void> {
  const e = await startEdgeGateway(
    { mllp: { idleTimeoutSeconds: 5, maxConnections: CONNECTIONS + 100, maxConnectionsPerSource: CONNECTIONS + 50 } },
    // EBBGATE_PORT / EBBGATE_MLLP_PORT: fixed ports, for a machine shared with other runs.
    {
      port: process.env.EBBGATE_PORT ? Number(process.env.EBBGATE_PORT) : undefined,
      mllpPort: process.env.EBBGATE_MLLP_PORT ? Number(process.env.EBBGATE_MLLP_PORT) : undefined,
    },
  );
  try {
    const M = '02EB6AFFFE00EB01';
    await registerMllpMonitor(e, M);
    // Idle connections: all held until the idle timeout, then closed; a normal ORU answered meanwhile.
    const t0 = Date.now();
    const idle = await Promise.all(Array.from({ length: CONNECTIONS }, () => Peer.plain(e.gw.mllpPort!)));
    const p = await Peer.plain(e.gw.mllpPort!);
    const a0 = performance.now();
    p.send(oru({ controlId: 'bench-normal', equipment: M, start: new Date('2026-12-01T09:00:00Z') }));
    const ack = readAck((await p.answers(1))[0]!);
    const ackMs = performance.now() - a0;
    p.close();
    if (ack.code !== 'AA') unexpected.push(`normal ORU among idle connections: ${ack.code} (${ack.errors.map((x) => x.text).join('; ')}), expected AA`);
    const closed = await Promise.all(idle.map((x) => x.closed(30_000)));
    console.log(
      `connections: ${CONNECTIONS} idle held, all closed by the server ${((Math.min(...closed) - t0) / 1000).toFixed(1)}–${((Math.max(...closed) - t0) / 1000).toFixed(1)} s after opening (idle timeout 5 s); a normal ORU meanwhile: ${ack.code} in ${ackMs.toFixed(0)} ms`,
    );

    // Strangers: keyless 8 MB POSTs.
    const body = Buffer.alloc(8 * 1024 * 1024, 0x20);
    const s0 = performance.now();
    const statuses: Record<string, number> = {};
    for (let round = 0; round < 10; round++)
      for (const st of await Promise.all(Array.from({ length: 20 }, () => keylessPost(e.gw.url, body)))) statuses[st] = (statuses[st] ?? 0) + 1;
    // 401, or the connection closed by the gateway while the 8 MB were still being written (it answers before reading the body).
    const refused = new Set(['401', 'EPIPE', 'ECONNRESET']);
    const other = Object.entries(statuses).filter(([st]) => !refused.has(st));
    if (other.length)
      unexpected.push(`keyless POSTs: ${other.map(([st, n]) => `${n} × ${st}`).join(', ')}, expected 401 (or the connection closed) for every one`);
    const [kept] = await e.query<{ n: number; stored: number }>(
      'SELECT COUNT(*) AS n, COALESCE(SUM(LENGTH(raw)), 0) AS stored FROM inbound_message WHERE stranger = 1',
    );
    console.log(
      `strangers: 200 keyless 8 MB POSTs (1.68 GB offered) in ${((performance.now() - s0) / 1000).toFixed(1)} s, answers ${JSON.stringify(statuses)} → ${kept!.n} records, ${kept!.stored} bytes stored`,
    );

    // /healthz while a 64k-OBX message arrives.
    const text = manyRows(65_536, M);
    const peer = await Peer.plain(e.gw.mllpPort!);
    let slowest = 0;
    let polls = 0;
    let done = false;
    const poll = (async () => {
      while (!done) {
        const q0 = performance.now();
        await (await fetch(`${e.gw.url}/healthz`)).arrayBuffer();
        slowest = Math.max(slowest, performance.now() - q0);
        polls++;
        await new Promise((r) => setTimeout(r, 10));
      }
    })();
    const b0 = performance.now();
    peer.send(text);
    const big = readAck((await peer.answers(1, 60_000))[0]!);
    done = true;
    await poll;
    peer.close();
    // Over the decoder's segment cap (maxSegments=20000) by design: the figure is /healthz while the gateway reads and refuses it.
    if (big.code !== 'AR' || !big.errors.some((x) => /maxSegments=20000/.test(x.text)))
      unexpected.push(`64k-OBX message: ${big.code} (${big.errors.map((x) => x.text).join('; ')}), expected AR naming maxSegments=20000`);
    console.log(
      `64k-OBX message (${(text.length / 1e6).toFixed(1)} MB, over the 20,000-segment cap): ${big.code} in ${(performance.now() - b0).toFixed(0)} ms; /healthz slowest ${slowest.toFixed(1)} ms over ${polls} polls`,
    );
  } finally {
    await e.stop();
  }
}

async function main(): Promise<void> {
  console.log(
    `edge benchmark: ${cpus().length} cores, load average ${loadavg()
      .map((l) => l.toFixed(2))
      .join(' ')}`,
  );
  const f = fuzzInProcess(RUNS);
  console.log(
    `fuzz (fast-check, in process): MLLP ${f.mllp.cases} cases tried in ${(f.mllp.ms / 1000).toFixed(1)} s; HTTP ${f.http.cases} cases tried in ${(f.http.ms / 1000).toFixed(1)} s; no unclear outcome`,
  );
  await decoderFigures();
  let stopDb: (() => Promise<void>) | null = null;
  if (!process.env.EBBGATE_TEST_ADMIN_URL) {
    const { server, adminUrl } = await startTestMariaDb();
    process.env.EBBGATE_TEST_ADMIN_URL = adminUrl;
    stopDb = () => server.stop();
  }
  try {
    await gatewayFigures();
  } finally {
    await stopDb?.();
  }
  if (unexpected.length)
    throw new Error(`bench:edge FAILED: unexpected answers, so the figures above do not show what they say:\n  ${unexpected.join('\n  ')}`);
}

main().then(
  () => process.exit(0),
  (err: unknown) => {
    console.error(err);
    process.exit(1);
  },
);
