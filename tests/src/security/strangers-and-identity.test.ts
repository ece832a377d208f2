/**
 * What strangers can store and who data is filed under, against the real gateway process:
 * keyless 8 MB POSTs (50 of them grew the database by 200 MB), reprocessing a quarantined
 * message into another monitor, and a second stream claiming a monitor for an overlapping span.
 */
import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { oru, Peer, readAck, registerMllpMonitor, startEdgeGateway, type EdgeGateway } from './edge-support';

let e: EdgeGateway;
const RATE = 50;

beforeAll(async () => {
  e = await startEdgeGateway({ ingest: { strangers: { keepBytes: 4096, perSourcePerMinute: RATE, retentionDays: 1 } } });
}, 120_000);
afterAll(async () => e?.stop());

/** One POST of `bytes` with no key; resolves with the status (or the socket error once the server closed). */
function keylessPost(bytes: Buffer): Promise<number | string> {
  return new Promise((resolve) => {
    const u = new URL(`${e.gw.url}/api/v1/ingest/batches`);
    const req = http.request(
      { host: u.hostname, port: u.port, path: u.pathname, method: 'POST', headers: { 'content-type': 'application/json', 'content-length': bytes.length } },
      (res) => {
        res.resume();
        res.on('end', () => resolve(res.statusCode ?? 0));
        res.on('error', () => resolve(res.statusCode ?? 0));
      },
    );
    req.on('error', (err: NodeJS.ErrnoException) => resolve(err.code ?? 'error'));
    req.end(bytes);
  });
}

describe('strangers', () => {
  it('200 keyless 8 MB POSTs: each refused 401, at most the per-source rate kept, each as a 4 KB prefix', async () => {
    const body = Buffer.alloc(8 * 1024 * 1024, 0x20);
    body.write('{"monitorId":"02EB6AFFFE00E301","batchId":"x","startTime":"2026-12-01T10:00:00Z","channels":[');
    const before = await e.metric('stranger-rate-limited');
    const answers: (number | string)[] = [];
    for (let round = 0; round < 10; round++) answers.push(...(await Promise.all(Array.from({ length: 20 }, () => keylessPost(body)))));
    expect(answers).toHaveLength(200);
    // Each caller is answered 401 or, having been answered, finds the connection closed mid-upload
    // (how many read the 401 before the close depends on socket timing: 148 of 200 in one CI run).
    // That every one of the 200 reached the gateway and was refused is counted server-side below.
    expect(answers.filter((a) => a === 401).length).toBeGreaterThan(0);
    expect(answers.every((a) => a === 401 || a === 'EPIPE' || a === 'ECONNRESET')).toBe(true);
    const [kept] = await e.query<{ n: number; stored: number; declared: number }>(
      'SELECT COUNT(*) AS n, SUM(LENGTH(raw)) AS stored, SUM(size_bytes) AS declared FROM inbound_message WHERE stranger = 1',
    );
    console.log(`strangers: 200 keyless 8 MB POSTs → ${kept!.n} kept, ${kept!.stored} bytes stored (${kept!.declared} bytes declared)`);
    expect(Number(kept!.n)).toBe(RATE);
    expect(Number(kept!.stored)).toBe(RATE * 4096);
    expect(Number(kept!.declared)).toBe(RATE * body.length);
    expect(await e.metric('stranger-rate-limited')).toBe(before + 200 - RATE);
    expect((await fetch(`${e.gw.url}/healthz`)).status).toBe(200);
  });
});

describe('reprocessing', () => {
  it('never files a message under a monitor other than the one its API key speaks for', async () => {
    const a = await registerMllpMonitor(e, '02EB6AFFFE00E311');
    await registerMllpMonitor(e, '02EB6AFFFE00E312');
    const key = (await e.integrator.post(`/monitors/${a.monitorId}/api-key`)).body.apiKey as string;
    const batch = {
      monitorId: '02EB6AFFFE00E312',
      batchId: 'cross-1',
      startTime: '2026-12-01T10:00:00.000Z',
      channels: [{ code: '150036', sampleRate: 125, samples: Array.from({ length: 500 }, (_, i) => 80 + (i % 50)) }],
    };
    const res = await fetch(`${e.gw.url}/api/v1/ingest/batches`, {
      method: 'POST',
      headers: { authorization: `Bearer ${key}`, 'content-type': 'application/json' },
      body: JSON.stringify(batch),
    });
    expect(res.status).toBe(422);
    const [q] = await e.query<{ id: number; outcome: string; sender: string }>("SELECT id, outcome, sender FROM inbound_message WHERE batch_id = 'cross-1'");
    expect(q).toMatchObject({ outcome: 'quarantined', sender: 'api-key:02EB6AFFFE00E311' });
    const r = await e.integrator.post(`/inbound-messages/${q!.id}/reprocess`);
    expect(r.status).toBe(200);
    expect(r.body.result).toBe('quarantined');
    expect(r.body.reason).toMatch(/API key of monitor 02EB6AFFFE00E311; it cannot be filed under monitor 02EB6AFFFE00E312/);
    const [segs] = await e.query<{ n: number }>(
      "SELECT COUNT(*) AS n FROM waveform_segment s JOIN monitor m ON m.id = s.monitor_id WHERE m.identifier = '02EB6AFFFE00E312'",
    );
    expect(Number(segs!.n)).toBe(0);
  });
});

describe('a second stream for one monitor', () => {
  it('is refused as conflicting for an overlapping span (kept and listed), never merged; the first stream goes on', async () => {
    const M = '02EB6AFFFE00E321';
    const { profileId } = await registerMllpMonitor(e, M);
    const [a, b] = e.certs.clients;
    for (const c of [a!, b!])
      expect((await e.integrator.post(`/profiles/${profileId}/edge-credentials`, { kind: 'certificate-fingerprint', value: c.fingerprint })).status).toBe(201);
    const t0 = new Date('2026-12-01T11:00:00.000Z');
    const at = (s: number) => new Date(t0.getTime() + s * 1000);
    const first = await Peer.secure(e.tlsPort, e.certs, a);
    const second = await Peer.secure(e.tlsPort, e.certs, b);
    first.send(oru({ controlId: 's1-0', equipment: M, start: at(0) }));
    first.send(oru({ controlId: 's1-4', equipment: M, start: at(4) }));
    await first.answers(2);
    second.send(oru({ controlId: 's2-2', equipment: M, start: at(2), value: 30, enhanced: true }));
    const [conflict] = (await second.answers(1)).map(readAck);
    // The first stream itself overlapping by a little (its own resend) is still its stream.
    first.send(oru({ controlId: 's1-8', equipment: M, start: at(7.5) }));
    const acks = (await first.answers(3)).map(readAck);
    first.close();
    second.close();
    expect(acks.map((x) => x.code)).toEqual(['AA', 'AA', 'AA']);
    expect(conflict).toMatchObject({ code: 'CE', controlId: 's2-2' });
    expect(conflict!.errors[0]!.text).toMatch(/second stream for monitor 02EB6AFFFE00E321/);
    const rows = await e.query<{ batch_id: string; outcome: string; continuity: string | null }>(
      'SELECT batch_id, outcome, continuity FROM inbound_message WHERE monitor_identifier = ? ORDER BY id',
      [M],
    );
    expect(rows).toEqual([
      { batch_id: 's1-0', outcome: 'accepted', continuity: 'first' },
      { batch_id: 's1-4', outcome: 'accepted', continuity: 'contiguous' },
      { batch_id: 's2-2', outcome: 'conflicting', continuity: null },
      { batch_id: 's1-8', outcome: 'accepted', continuity: 'overlap' },
    ]);
    const listed = await e.integrator.get('/inbound-messages?outcome=conflicting');
    expect(listed.status).toBe(200);
    expect(listed.body.items.map((m: { batchId: string }) => m.batchId)).toEqual(['s2-2']);
    const [segs] = await e.query<{ n: number }>(
      'SELECT COUNT(*) AS n FROM waveform_segment s JOIN inbound_message m ON m.id = s.inbound_message_id WHERE m.batch_id = ?',
      ['s2-2'],
    );
    expect(Number(segs!.n)).toBe(0);
    // Alerted: counted on /metrics for the monitoring that watches the gateway.
    expect(await e.metric('conflicting-stream')).toBe(1);
  });
});
