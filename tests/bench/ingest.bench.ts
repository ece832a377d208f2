/**
 * Benchmark: HTTP ingest batches/s with p50/p99 latency (autocannon) for 10-s, 2-channel, 125 Hz
 * batches (base64 float32), beside a bare Node HTTP server that reads and parses the same body
 * in the same run (ratio printed); MLLP PCD-01 messages/s; the gateway's resident memory under
 * that load. The gateway runs as its own process on the compiled build (node gateway/dist/main.js, built
 * first when stale; BENCH_FROM_SOURCE=1 runs gateway/src/main.ts under tsx instead) on a throwaway
 * private MariaDB; the analysis worker is off (EBBGATE_ANALYSIS_WORKER=false) so the figures are ingest alone (analysis has its
 * own benchmark). Prints figures. Issue 4 floor: 400 batches/s with p99 < 100 ms; goal
 * 1,000 batches/s, >= 30 % of the bare server, < 300 MB.
 *
 * The load is what well-configured monitors send: each monitor one stream on one transport (the
 * MLLP monitors are not the HTTP ones: a second stream for a monitor is refused as conflicting),
 * its batches in time order, monitor id in MSH-3 and OBX-18 the registered identifier. Every
 * answer is counted by its outcome; the run fails (exit 1, with the refusals' reasons) when any
 * batch was not accepted (HTTP other than 202, MLLP other than AA), so refused input is never
 * counted as throughput.
 * Run: npm run bench:ingest   (BENCH_SECONDS, BENCH_CONNECTIONS, BENCH_MONITORS, BENCH_MLLP_MONITORS
 * to change; EBBGATE_PORT and EBBGATE_MLLP_PORT for fixed gateway ports)
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import net from 'node:net';
import { cpus, loadavg } from 'node:os';
import autocannon from 'autocannon';
import { encodeSamplesFloat32 } from '@ebbgate/shared';
import { frameMllp } from '@ebbgate/shared/hl7';
import { generateWindow } from '@ebbgate/shared/synthetic';
import { startTestMariaDb } from '../../scripts/lib/test-mariadb';
import { createTestDatabase } from '../../scripts/lib/test-database';
import { repoRoot } from '@ebbgate/gateway/config/load';
import { buildAll, buildIsStale } from '../../scripts/build';
import { NODE_RUNTIME_FLAGS } from '../../scripts/lib/supervisor';
import { corvaneProfile } from '@ebbgate/gateway/test/devices/fixtures';
import { buildPcd01 } from '@ebbgate/gateway/test/ingest/pcd01-fixture';
import { freePort, signIn, DEMO_INTEGRATOR } from '../src/ingest/gateway-process';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 10);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 20);
const MONITORS = Number(process.env.BENCH_MONITORS ?? 200);
const MLLP_CONNECTIONS = 8;
/** MLLP monitors, shared out over the connections: enough that none exceeds its analysis backlog quota (ingest.monitorBacklogLimit) in a run. */
const MLLP_MONITORS = Number(process.env.BENCH_MLLP_MONITORS ?? 32);
const T0 = Date.parse('2026-11-30T00:00:00.000Z');

const window = generateWindow({ seed: 1, durationSeconds: 10, heartRate: 80, respiratoryRate: 15, ppv: 12, channels: ['abp', 'paw'] });
const abp64 = encodeSamplesFloat32(window.channels[0]!.samples).data;
const paw64 = encodeSamplesFloat32(window.channels[1]!.samples).data;

/** One batch body; only the ids and the start time change between requests. */
function body(monitorId: string, seq: number): string {
  return (
    `{"monitorId":"${monitorId}","batchId":"bench-${seq}","startTime":"${new Date(T0 + seq * 10_000).toISOString()}",` +
    `"channels":[{"code":"MDC_PRESS_BLD_ART_ABP","sampleRate":125,"unit":"mmHg","samples":{"encoding":"float32le-base64","data":"${abp64}"}},` +
    `{"code":"MDC_PRESS_AWAY","sampleRate":125,"unit":"cmH2O","samples":{"encoding":"float32le-base64","data":"${paw64}"}}],` +
    `"context":{"ventilationMode":"controlled","tidalVolumeMl":480}}`
  );
}

function rssMb(pid: number): number {
  const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
  return m ? Number(m[1]) / 1024 : Number.NaN;
}

async function waitHttp(url: string, child: ChildProcess, out: () => string): Promise<void> {
  const until = Date.now() + 90_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`process exited:\n${out()}`);
    try {
      await fetch(url);
      return;
    } catch {
      if (Date.now() > until) throw new Error(`no answer from ${url}:\n${out()}`);
      await new Promise((r) => setTimeout(r, 250));
    }
  }
}

function spawnLogged(cmd: string, args: string[], env: Record<string, string>) {
  const child = spawn(cmd, args, {
    cwd: repoRoot,
    env: { PATH: process.env.PATH ?? '', HOME: process.env.HOME ?? '/tmp', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d: Buffer) => (out = (out + d.toString()).slice(-10_000)));
  child.stderr!.on('data', (d: Buffer) => (out = (out + d.toString()).slice(-10_000)));
  return { child, out: () => out };
}

/** The bare peer: Node's http server reading the whole body and parsing it as JSON, answering 202. */
const BARE_SERVER = `
const http = require('node:http');
http.createServer((req, res) => {
  const chunks = [];
  req.on('data', (c) => chunks.push(c));
  req.on('end', () => {
    try { JSON.parse(Buffer.concat(chunks).toString('utf8')); res.writeHead(202, { 'content-type': 'application/json' }); res.end('{"outcome":"accepted"}'); }
    catch { res.writeHead(400); res.end(); }
  });
}).listen(Number(process.env.PORT), '127.0.0.1');
`;

interface Result {
  rate: number;
  p50: number;
  p99: number;
  /** Answers by HTTP status (202 = accepted; 200 = a duplicate, not stored again). */
  statuses: Record<string, number>;
  errors: number;
  timeouts: number;
}

async function cannon(url: string, keys: { identifier: string; apiKey: string }[], opts: { overallRate?: number; seqBase: number }): Promise<Result> {
  let n = 0;
  const seq = new Map<string, number>();
  const r = await autocannon({
    url: `${url}/api/v1/ingest/batches`,
    method: 'POST',
    connections: CONNECTIONS,
    duration: SECONDS,
    ...(opts.overallRate ? { overallRate: opts.overallRate } : {}),
    headers: { 'content-type': 'application/json' },
    requests: [
      {
        setupRequest: (req) => {
          const k = keys[n++ % keys.length]!;
          const s = (seq.get(k.identifier) ?? opts.seqBase) + 1;
          seq.set(k.identifier, s);
          return { ...req, headers: { ...req.headers, authorization: `Bearer ${k.apiKey}` }, body: body(k.identifier, s) };
        },
      },
    ],
  });
  const statuses = Object.fromEntries(Object.entries(r.statusCodeStats ?? {}).map(([code, v]) => [code, v.count ?? 0]));
  return { rate: r.requests.average, p50: r.latency.p50, p99: r.latency.p99, statuses, errors: r.errors, timeouts: r.timeouts };
}

const fmt = (r: Result) =>
  `${r.rate.toFixed(0).padStart(6)} batches/s   p50 ${String(r.p50).padStart(4)} ms   p99 ${String(r.p99).padStart(4)} ms   answers ${JSON.stringify(r.statuses)}   errors ${r.errors}`;

/** What was not an accepted batch in an HTTP run, in words; none: null. */
function httpRefusals(name: string, r: Result): string | null {
  const other = Object.entries(r.statuses).filter(([code]) => code !== '202');
  if (!other.length && !r.errors && !r.timeouts) return null;
  return `${name}: ${other.map(([code, n]) => `${n} × HTTP ${code}`).join(', ') || 'no refusals'}; ${r.errors} connection errors, ${r.timeouts} timeouts`;
}

interface MllpResult {
  /** Accepted (AA) messages per second. */
  rate: number;
  acks: Record<string, number>;
  /** ERR-8 texts of the answers other than AA, with their counts (the first 5 kinds). */
  reasons: Map<string, number>;
}

/**
 * MLLP: `connections` connections, each sending PCD-01 messages one after another and waiting for
 * each ACK; connection c sends for monitors c, c + connections, … in turn, each monitor's
 * batches consecutive in time (10 s each), as one monitor streams.
 */
async function mllpRate(port: number, identifiers: string[], connections: number, seconds: number): Promise<MllpResult> {
  const until = Date.now() + seconds * 1000;
  const acks: Record<string, number> = {};
  const reasons = new Map<string, number>();
  const sent = new Map<string, number>();
  await Promise.all(
    Array.from(
      { length: connections },
      (_, c) =>
        new Promise<void>((resolve, reject) => {
          const mine = identifiers.filter((_, i) => i % connections === c);
          const socket = net.connect({ host: '127.0.0.1', port });
          let buf = Buffer.alloc(0);
          let i = 0;
          const next = () => {
            if (Date.now() > until) return socket.end(() => resolve());
            const equipment = mine[i % mine.length]!;
            const k = sent.get(equipment) ?? 0;
            sent.set(equipment, k + 1);
            const text = buildPcd01({
              controlId: `mllp-${c}-${i}`,
              equipment,
              start: new Date(T0 + k * 10_000),
              waves: [{ code: '150036', refId: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, samples: window.channels[0]!.samples }],
            });
            i++;
            socket.write(frameMllp(text));
          };
          socket.on('connect', next);
          socket.on('error', reject);
          socket.on('data', (d: Buffer) => {
            buf = Buffer.concat([buf, d]);
            const e = buf.indexOf(Buffer.from([0x1c, 0x0d]));
            if (e < 0) return;
            const ack = buf.subarray(1, e).toString();
            buf = buf.subarray(e + 2);
            const code = /\rMSA\|([A-Z]{2})/.exec(ack)?.[1] ?? '?';
            acks[code] = (acks[code] ?? 0) + 1;
            if (code !== 'AA') {
              // ERR-8 in words, with the figures that differ per message (ids, times) masked so like reasons count together.
              const text = (
                ack
                  .split('\r')
                  .find((seg) => seg.startsWith('ERR|'))
                  ?.split('|')[8] ?? 'no ERR segment'
              ).replace(/\d+/g, '#');
              if (reasons.has(text) || reasons.size < 5) reasons.set(text, (reasons.get(text) ?? 0) + 1);
            }
            next();
          });
        }),
    ),
  );
  return { rate: (acks.AA ?? 0) / seconds, acks, reasons };
}

async function main(): Promise<void> {
  console.log(
    `ingest benchmark: ${cpus().length} cores, load average ${loadavg()
      .map((l) => l.toFixed(2))
      .join(' ')}; ${SECONDS} s per run, ${CONNECTIONS} connections, ${MONITORS} monitors`,
  );
  let stopDb: (() => Promise<void>) | null = null;
  if (!process.env.EBBGATE_TEST_ADMIN_URL) {
    const { server, adminUrl } = await startTestMariaDb();
    process.env.EBBGATE_TEST_ADMIN_URL = adminUrl;
    stopDb = () => server.stop();
  }
  const db = await createTestDatabase();
  const port = process.env.EBBGATE_PORT ? Number(process.env.EBBGATE_PORT) : await freePort();
  const mllpPort = process.env.EBBGATE_MLLP_PORT ? Number(process.env.EBBGATE_MLLP_PORT) : await freePort();
  // node (not the tsx CLI, which forks) so the pid is the gateway's own, for its memory.
  const profile = process.env.BENCH_CPU_PROF ? ['--cpu-prof', `--cpu-prof-dir=${process.env.BENCH_CPU_PROF}`] : [];
  const fromSource = process.env.BENCH_FROM_SOURCE === '1';
  if (!fromSource && buildIsStale()) await buildAll();
  const entry = fromSource ? ['--import', 'tsx', 'gateway/src/main.ts'] : [...NODE_RUNTIME_FLAGS, 'gateway/dist/main.js'];
  console.log(`gateway: ${fromSource ? 'from source (tsx)' : 'compiled build (node gateway/dist/main.js)'}`);
  const gw = spawnLogged(process.execPath, [...profile, ...entry], {
    NODE_ENV: 'production' === process.env.BENCH_NODE_ENV ? 'production' : 'test',
    DATABASE_URL: db.url,
    EBBGATE_PORT: String(port),
    EBBGATE_JWT_SECRET: randomBytes(32).toString('hex'),
    EBBGATE_MIGRATE_ON_START: 'true',
    EBBGATE_SEED_DEMO: 'true',
    EBBGATE_MLLP_ENABLED: 'true',
    EBBGATE_MLLP_PORT: String(mllpPort),
    EBBGATE_WORKERS: 'true',
    EBBGATE_ANALYSIS_WORKER: 'false',
    EBBGATE_EHR_FHIR_URL: 'http://127.0.0.1:9/fhir',
    EBBGATE_EHR_TOKEN_URL: 'http://127.0.0.1:9/token',
    EBBGATE_LOG_LEVEL: 'warn',
    EBBGATE_INGEST_BACKLOG_LIMIT: '100000000',
    EBBGATE_DB_POOL_SIZE: '30',
    ...(process.env.EBBGATE_INGEST_GROUP_COMMIT ? { EBBGATE_INGEST_GROUP_COMMIT: process.env.EBBGATE_INGEST_GROUP_COMMIT } : {}),
  });
  const barePort = await freePort();
  const bare = spawnLogged(process.execPath, ['-e', BARE_SERVER], { PORT: String(barePort) });
  const gatewayUrl = `http://127.0.0.1:${port}`;
  const bareUrl = `http://127.0.0.1:${barePort}`;
  let peakRss = 0;
  const sampler = setInterval(() => {
    if (gw.child.pid && gw.child.exitCode === null) peakRss = Math.max(peakRss, rssMb(gw.child.pid));
  }, 200);
  try {
    await waitHttp(`${gatewayUrl}/healthz`, gw.child, gw.out);
    await waitHttp(bareUrl, bare.child, bare.out);
    const integrator = await signIn(gatewayUrl, DEMO_INTEGRATOR.username, DEMO_INTEGRATOR.password);
    const profile = await integrator.post('/profiles', corvaneProfile('Corvane bench'));
    const keys: { identifier: string; apiKey: string }[] = [];
    for (let i = 0; i < MONITORS; i++) {
      const identifier = `BE0C${i.toString(16).toUpperCase().padStart(12, '0')}`;
      const m = await integrator.post('/monitors', { identifier, profileId: profile.body.id });
      if (m.status !== 201) throw new Error(`monitor ${identifier}: ${m.status} ${JSON.stringify(m.body)}`);
      keys.push({ identifier, apiKey: (await integrator.post(`/monitors/${m.body.id}/api-key`)).body.apiKey as string });
    }
    // The MLLP monitors: registered on the same profile, no API key (plain MLLP from an allowed source address).
    const mllpIds: string[] = [];
    for (let i = 0; i < MLLP_MONITORS; i++) {
      const identifier = `BE0E${i.toString(16).toUpperCase().padStart(12, '0')}`;
      const m = await integrator.post('/monitors', { identifier, profileId: profile.body.id });
      if (m.status !== 201) throw new Error(`monitor ${identifier}: ${m.status} ${JSON.stringify(m.body)}`);
      mllpIds.push(identifier);
    }
    const bytes = Buffer.byteLength(body(keys[0]!.identifier, 1));
    console.log(`batch body: ${bytes} bytes (2 channels × 1,250 float32 samples, base64)`);
    const idleRss = rssMb(gw.child.pid!);
    const warmUp = await cannon(gatewayUrl, keys, { seqBase: 0, overallRate: 100 }); // warm-up (JIT, pools, key cache)
    const bareMax = await cannon(bareUrl, keys, { seqBase: 0 });
    const gwMax = await cannon(gatewayUrl, keys, { seqBase: 1_000_000 });
    const floor = await cannon(gatewayUrl, keys, { seqBase: 2_000_000, overallRate: 400 });
    const goal = await cannon(gatewayUrl, keys, { seqBase: 3_000_000, overallRate: 1000 });
    console.log(`bare Node http server (max):   ${fmt(bareMax)}`);
    console.log(`gateway ingest (max):          ${fmt(gwMax)}`);
    console.log(`gateway at 400 batches/s:      ${fmt(floor)}`);
    console.log(`gateway at 1,000 batches/s:    ${fmt(goal)}`);
    console.log(`gateway / bare server: ${((gwMax.rate / bareMax.rate) * 100).toFixed(1)} % (goal >= 30 %)`);
    const mllp = await mllpRate(mllpPort, mllpIds, MLLP_CONNECTIONS, SECONDS);
    console.log(
      `MLLP PCD-01 (1 × 1,250-sample NA, ${MLLP_CONNECTIONS} connections, ${MLLP_MONITORS} monitors, ACK awaited): ${mllp.rate.toFixed(0)} accepted messages/s, acks ${JSON.stringify(mllp.acks)}`,
    );
    console.log(`gateway resident memory: idle ${idleRss.toFixed(0)} MB, peak under load ${peakRss.toFixed(0)} MB (goal < 300 MB)`);
    console.log(
      `load average after: ${loadavg()
        .map((l) => l.toFixed(2))
        .join(' ')} (other work on the machine lowers every figure)`,
    );
    const refused = [
      httpRefusals('warm-up', warmUp),
      httpRefusals('gateway ingest (max)', gwMax),
      httpRefusals('gateway at 400 batches/s', floor),
      httpRefusals('gateway at 1,000 batches/s', goal),
    ].filter((x): x is string => x !== null);
    const notAa = Object.entries(mllp.acks).filter(([code]) => code !== 'AA');
    if (notAa.length)
      refused.push(
        `MLLP: ${notAa.map(([code, n]) => `${n} × ${code}`).join(', ')}; reasons: ${[...mllp.reasons].map(([why, n]) => `${n} × "${why}"`).join('; ')}`,
      );
    if (!mllp.acks.AA) refused.push('MLLP: no message accepted');
    if (refused.length)
      throw new Error(`bench:ingest FAILED: batches were not accepted, so the figures above do not measure ingest:\n  ${refused.join('\n  ')}`);
  } finally {
    clearInterval(sampler);
    gw.child.kill('SIGTERM');
    bare.child.kill('SIGTERM');
    await new Promise((r) => setTimeout(r, 1500));
    await db.drop().catch(() => undefined);
    await stopDb?.();
  }
}

main().then(
  () => process.exit(0),
  (err: unknown) => {
    console.error(err);
    process.exit(1);
  },
);
