/**
 * Stall and connection attacks on the MLLP listener, against the real gateway process: a
 * 64k-OBX message (the decoder was quadratic: 52 s for 64k rows, the event loop stood still),
 * hundreds of idle connections, a slow-drip frame, more connections than a source may hold.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { oru, Peer, readAck, registerMllpMonitor, startEdgeGateway, type EdgeGateway } from './edge-support';

let e: EdgeGateway;
const M = '02EB6AFFFE00E201';
const start = new Date('2026-12-01T09:00:00.000Z');

beforeAll(async () => {
  e = await startEdgeGateway({ mllp: { idleTimeoutSeconds: 2, frameTimeoutSeconds: 2, maxConnections: 1000, maxConnectionsPerSource: 600 } });
  await registerMllpMonitor(e, M);
}, 120_000);
afterAll(async () => e?.stop());

/** Polls /healthz every 20 ms while `work` runs; returns the slowest answer, ms. */
async function healthzWhile<T>(work: Promise<T>): Promise<{ result: T; slowestMs: number; polls: number }> {
  let done = false;
  let slowest = 0;
  let polls = 0;
  const poller = (async () => {
    while (!done) {
      const t0 = performance.now();
      const r = await fetch(`${e.gw.url}/healthz`);
      await r.arrayBuffer();
      expect(r.status).toBe(200);
      slowest = Math.max(slowest, performance.now() - t0);
      polls++;
      await new Promise((res) => setTimeout(res, 20));
    }
  })();
  try {
    return { result: await work, slowestMs: slowest, polls };
  } finally {
    done = true;
    await poller;
  }
}

function bigOru(rows: number): string {
  const t = '20261201090000.000+0000';
  const segs = [
    `MSH|^~\\&|EDGE_TEST^${M}^EUI-64|HGH|EBBGATE|HGH|${t}||ORU^R01^ORU_R01|big-64k|P|2.6`,
    `OBR|1|||182777000^monitoring of patient^SCT|||${t}`,
    `OBX|1||69965^MDC_DEV_MON_PHYSIO_MULTI_PARAM_MDS^MDC|1.0.0.0|||||||X|||||||${M}^^${M}^EUI-64`,
  ];
  for (let i = 0; i < rows; i++)
    segs.push(
      `OBX|${i + 2}|NM|147842^MDC_ECG_HEART_RATE^MDC|1.1.${Math.floor(i / 1000) + 1}.${(i % 1000) + 1}|${60 + (i % 40)}|264864^MDC_DIM_BEAT_PER_MIN^MDC|||||R|||${t}`,
    );
  return segs.join('\r') + '\r';
}

describe('a 64k-OBX message', () => {
  it('is answered AR naming the limit while /healthz keeps answering within 200 ms', async () => {
    const text = bigOru(65_536);
    expect(text.length).toBeGreaterThan(5_000_000);
    expect(text.length).toBeLessThan(8_388_608);
    const peer = await Peer.plain(e.gw.mllpPort!);
    const { result, slowestMs, polls } = await healthzWhile(
      (async () => {
        peer.send(text);
        return (await peer.answers(1, 60_000)).map(readAck)[0]!;
      })(),
    );
    peer.close();
    expect(result).toMatchObject({ code: 'AR', controlId: 'big-64k' });
    expect(result.errors[0]!.text).toMatch(/maxSegments=20000/);
    expect(polls).toBeGreaterThan(0);
    console.log(`64k-OBX message (${text.length} bytes): AR; slowest /healthz ${slowestMs.toFixed(1)} ms over ${polls} polls`);
    expect(slowestMs).toBeLessThan(200);
  });
});

describe('connections', () => {
  it("closes a source's connection beyond its limit at once (counted)", async () => {
    const peers = await Promise.all(Array.from({ length: 600 }, () => Peer.plain(e.gw.mllpPort!)));
    const extra = await Peer.plain(e.gw.mllpPort!);
    const closedAt = await extra.closed(5_000);
    expect(peers.filter((p) => p.closedAt !== null && p.closedAt <= closedAt)).toHaveLength(0);
    expect(await e.metric('source-connection-limit')).toBeGreaterThanOrEqual(1);
    await Promise.all(peers.map((p) => p.closed(10_000)));
  });

  it('closes 500 idle connections after the idle timeout, while a normal ORU still gets its ACK', async () => {
    const before = await e.metric('idle-closed');
    const t0 = Date.now();
    const idle = await Promise.all(Array.from({ length: 500 }, () => Peer.plain(e.gw.mllpPort!)));
    const peer = await Peer.plain(e.gw.mllpPort!);
    peer.send(oru({ controlId: 'normal-1', equipment: M, start }));
    const [ack] = await peer.answers(1);
    expect(readAck(ack!)).toMatchObject({ code: 'AA', controlId: 'normal-1' });
    expect(idle.every((p) => p.closedAt === null)).toBe(true);
    const closed = await Promise.all(idle.map((p) => p.closed(15_000)));
    const held = Math.max(...closed) - t0;
    console.log(`500 idle connections held ${held} ms at most (idle timeout 2 s)`);
    expect(Math.min(...closed) - t0).toBeGreaterThanOrEqual(1_500);
    expect(await e.metric('idle-closed')).toBeGreaterThanOrEqual(before + 500);
    peer.close();
  });

  it('closes a slow-drip frame after the frame timeout even though bytes keep coming', async () => {
    const before = await e.metric('frame-timeout');
    const peer = await Peer.plain(e.gw.mllpPort!);
    const text = Buffer.from('\x0b' + oru({ controlId: 'drip-1', equipment: M, start }));
    const t0 = Date.now();
    let i = 0;
    const drip = setInterval(() => {
      if (peer.closedAt === null && i < text.length) peer.socket.write(text.subarray(i, ++i));
    }, 200);
    try {
      const at = await peer.closed(10_000);
      expect(at - t0).toBeGreaterThanOrEqual(1_500);
      expect(at - t0).toBeLessThan(6_000);
    } finally {
      clearInterval(drip);
    }
    expect(await e.metric('frame-timeout')).toBe(before + 1);
    // The cut-off frame is kept (quarantined), as every inbound message is.
    const [row] = await e.query<{ reason: string }>("SELECT reason FROM inbound_message WHERE outcome = 'quarantined' ORDER BY id DESC LIMIT 1");
    expect(row!.reason).toMatch(/closed in the middle of an MLLP frame/);
  });
});
