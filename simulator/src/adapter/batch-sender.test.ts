import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { ingestBatchSchema, type IngestBatch } from '@ebbgate/shared';
import { createIngestClient, type SenderEvent } from './index';
import { SampleBatcher } from './sample-batcher';

// A bare node:http server on 127.0.0.1 stands in for the gateway; each test scripts its answers.
interface Seen {
  at: number;
  auth: string | undefined;
  batch: IngestBatch;
}
type Answer = { status: number; headers?: Record<string, string>; body?: unknown };

async function fakeGateway(answer: (batch: IngestBatch, n: number) => Answer, port = 0) {
  const seen: Seen[] = [];
  const server = http.createServer((req, res) => {
    let body = '';
    req.on('data', (c) => (body += c));
    req.on('end', () => {
      const batch = JSON.parse(body) as IngestBatch;
      seen.push({ at: Date.now(), auth: req.headers.authorization, batch });
      const a = answer(batch, seen.length);
      const type = a.status >= 400 ? 'application/problem+json' : 'application/json';
      res.writeHead(a.status, { 'content-type': type, ...a.headers });
      res.end(JSON.stringify(a.body ?? {}));
    });
  });
  await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return { url, seen, port: (server.address() as AddressInfo).port, close: () => new Promise<void>((r) => server.close(() => r())) };
}

const dirs: string[] = [];
async function tempDir() {
  const d = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-spool-'));
  dirs.push(d);
  return d;
}
afterEach(async () => {
  for (const d of dirs.splice(0)) await rm(d, { recursive: true, force: true });
});

function batches(monitorId: string, count: number): IngestBatch[] {
  const b = new SampleBatcher({
    monitorId,
    channels: [{ code: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, unit: 'mmHg' }],
    batchSeconds: 1,
    startTime: new Date('2026-12-01T10:00:00Z'),
  });
  const out: IngestBatch[] = [];
  for (let k = 0; k < count; k++)
    out.push(
      ...b.push(
        'MDC_PRESS_BLD_ART_ABP',
        Array.from({ length: 125 }, (_, i) => 80 + Math.sin(i / 10) * 20 + k),
      ),
    );
  return out;
}

const fast = { baseDelayMs: 20, maxDelayMs: 200, minDelayMs: 5 };

describe('adapter client over HTTP (bare node:http server as the gateway)', () => {
  it('sends each batch once with the monitor key; 202 (new) and 200 (repeat) are both success', async () => {
    const gw = await fakeGateway((_b, n) => ({ status: n === 2 ? 200 : 202 }));
    const events: SenderEvent[] = [];
    const client = await createIngestClient({ gatewayUrl: gw.url, apiKeys: { 'EUI-1': 'key-one' }, spoolDir: await tempDir(), onEvent: (e) => events.push(e) });
    for (const b of batches('EUI-1', 3)) await client.send(b);
    await client.drain(5000);
    await client.close();
    expect(gw.seen).toHaveLength(3);
    // Contract of POST /api/v1/ingest/batches (api-plan.md): Bearer device key, IngestBatch body.
    for (const s of gw.seen) {
      expect(s.auth).toBe('Bearer key-one');
      expect(ingestBatchSchema.safeParse(s.batch).success).toBe(true);
    }
    expect(events.filter((e) => e.kind === 'accepted').map((e) => (e as { status: number }).status)).toEqual([202, 200, 202]);
    expect(client.stats).toMatchObject({ accepted: 3, repeats: 1, retries: 0, rejected: 0 });
  });

  it('honours Retry-After (delay-seconds, RFC 9110 §10.2.3) on 503 and 429 before trying again', async () => {
    const gw = await fakeGateway((_b, n) =>
      n === 1 ? { status: 503, headers: { 'retry-after': '1' } } : n === 2 ? { status: 429, headers: { 'retry-after': '1' } } : { status: 202 },
    );
    const events: SenderEvent[] = [];
    const client = await createIngestClient({ gatewayUrl: gw.url, apiKeys: () => 'k', spoolDir: await tempDir(), retry: fast, onEvent: (e) => events.push(e) });
    await client.send(batches('EUI-2', 1)[0]);
    await client.drain(10_000);
    await client.close();
    expect(gw.seen).toHaveLength(3);
    const retries = events.filter((e) => e.kind === 'retrying');
    expect(retries.map((e) => (e as { retryAfterMs?: number }).retryAfterMs)).toEqual([1000, 1000]);
    // The backoff alone would be ≤ 200 ms here, so a gap of ≥ 1 s is the header being obeyed.
    expect(gw.seen[1].at - gw.seen[0].at).toBeGreaterThanOrEqual(950);
    expect(gw.seen[2].at - gw.seen[1].at).toBeGreaterThanOrEqual(950);
    expect(new Set(gw.seen.map((s) => s.batch.batchId)).size).toBe(1); // same idempotency key each time
  });

  it('backs off exponentially with jitter on 500 and on an unreachable gateway', async () => {
    const gw = await fakeGateway((_b, n) => (n <= 3 ? { status: 500, body: { title: 'boom', status: 500 } } : { status: 202 }));
    const delays: number[] = [];
    const client = await createIngestClient({
      gatewayUrl: gw.url,
      apiKeys: () => 'k',
      spoolDir: await tempDir(),
      retry: { baseDelayMs: 40, maxDelayMs: 100, minDelayMs: 1 },
      random: () => 0.5,
      onEvent: (e) => e.kind === 'retrying' && delays.push(e.delayMs),
    });
    await client.send(batches('EUI-3', 1)[0]);
    await client.drain(5000);
    await client.close();
    // Full jitter: random × min(cap, base · 2^(attempt−1)) with random = 0.5 → 20, 40, 50 (capped at 100).
    expect(delays).toEqual([20, 40, 50]);
    expect(gw.seen).toHaveLength(4);
  });

  it('reports 409 and 422 as permanent failures, keeps them in rejected/ with the answer, and goes on', async () => {
    const problem = { type: 'about:blank', title: 'Batch id reused with other content', status: 409 };
    const gw = await fakeGateway((_b, n) =>
      n === 1
        ? { status: 409, body: problem }
        : n === 2
          ? { status: 422, body: { title: 'Invalid batch', status: 422, errors: [{ path: 'channels.0.sampleRate', message: 'too high' }] } }
          : { status: 202 },
    );
    const spoolDir = await tempDir();
    const rejected: Extract<SenderEvent, { kind: 'rejected' }>[] = [];
    const client = await createIngestClient({
      gatewayUrl: gw.url,
      apiKeys: () => 'k',
      spoolDir,
      retry: fast,
      onEvent: (e) => e.kind === 'rejected' && rejected.push(e),
    });
    for (const b of batches('EUI-4', 3)) await client.send(b);
    await client.drain(5000);
    await client.close();
    expect(gw.seen).toHaveLength(3); // no retry of a permanent failure
    expect(rejected.map((r) => r.status)).toEqual([409, 422]);
    expect(rejected[1].reason).toContain('channels.0.sampleRate');
    const files = (await readdir(path.join(spoolDir, 'EUI-4', 'rejected'))).sort();
    expect(files).toEqual(['000000000000.answer.json', '000000000000.json', '000000000001.answer.json', '000000000001.json']);
    const kept = JSON.parse(await readFile(path.join(spoolDir, 'EUI-4', 'rejected', '000000000000.json'), 'utf8'));
    expect(kept.batchId).toBe(gw.seen[0].batch.batchId);
    expect(client.stats).toMatchObject({ accepted: 1, rejected: 2 });
  });

  it('holds batches on disk while the gateway is down and replays them in order after a restart', async () => {
    const spoolDir = await tempDir();
    // Reserve a port, then close it: connections are refused until the gateway "comes back".
    const probe = await fakeGateway(() => ({ status: 202 }));
    const port = probe.port;
    await probe.close();
    const url = `http://127.0.0.1:${port}`;
    const sent = batches('EUI-5', 4);
    const first = await createIngestClient({ gatewayUrl: url, apiKeys: () => 'k', spoolDir, retry: { baseDelayMs: 50, maxDelayMs: 50, minDelayMs: 50 } });
    for (const b of sent) await first.send(b);
    await new Promise((r) => setTimeout(r, 200));
    expect(first.pending()).toBe(4);
    await first.close(); // the adapter process ends with nothing delivered
    expect((await readdir(path.join(spoolDir, 'EUI-5'))).filter((f) => f.endsWith('.json'))).toHaveLength(4);

    const gw = await fakeGateway(() => ({ status: 202 }), port);
    const events: SenderEvent[] = [];
    const second = await createIngestClient({ gatewayUrl: url, apiKeys: () => 'k', spoolDir, onEvent: (e) => events.push(e) });
    await second.drain(5000);
    await second.close();
    await gw.close();
    expect(events[0]).toEqual({ kind: 'replaying', batches: 4, monitors: 1 });
    expect(gw.seen.map((s) => s.batch.batchId)).toEqual(sent.map((b) => b.batchId));
    expect(gw.seen.map((s) => s.batch.startTime)).toEqual(sent.map((b) => b.startTime));
    expect((await readdir(path.join(spoolDir, 'EUI-5'))).filter((f) => f.endsWith('.json'))).toHaveLength(0);
  });

  it('in on-failure mode keeps nothing on disk while all goes well, and spools what is left at close', async () => {
    const spoolDir = await tempDir();
    let up = true;
    const gw = await fakeGateway(() => (up ? { status: 202 } : { status: 503, headers: { 'retry-after': '30' } }));
    const client = await createIngestClient({ gatewayUrl: gw.url, apiKeys: () => 'k', spoolDir, spoolMode: 'on-failure' });
    const [a, b, c] = batches('EUI-6', 3);
    await client.send(a);
    await client.drain(5000);
    expect(await readdir(spoolDir)).toEqual([]);
    up = false;
    await client.send(b);
    await client.send(c);
    await new Promise((r) => setTimeout(r, 150));
    await client.close();
    await gw.close();
    const left = (await readdir(path.join(spoolDir, 'EUI-6'))).sort();
    expect(left).toEqual(['000000000001.json', '000000000002.json']);
    expect(JSON.parse(await readFile(path.join(spoolDir, 'EUI-6', left[0]), 'utf8')).batchId).toBe(b.batchId);
  });

  it('keeps one queue per monitor: a refusing monitor does not hold up the others', async () => {
    const gw = await fakeGateway((batch) => (batch.monitorId === 'SLOW' ? { status: 503, headers: { 'retry-after': '30' } } : { status: 202 }));
    const client = await createIngestClient({ gatewayUrl: gw.url, apiKeys: () => 'k', spoolDir: await tempDir() });
    await client.send(batches('SLOW', 1)[0]);
    for (const b of batches('FAST', 3)) await client.send(b);
    await new Promise((r) => setTimeout(r, 300));
    expect(client.pending('FAST')).toBe(0);
    expect(client.pending('SLOW')).toBe(1);
    await client.close();
    await gw.close();
  });
});

describe('adapter client ordering', () => {
  it('sends in call order even when send() calls overlap (no await between them)', async () => {
    const gw = await fakeGateway(() => ({ status: 202 }));
    const client = await createIngestClient({ gatewayUrl: gw.url, apiKeys: () => 'k', spoolDir: await tempDir() });
    const sent = batches('EUI-7', 20);
    await Promise.all(sent.map((b) => client.send(b)));
    await client.drain(5000);
    await client.close();
    await gw.close();
    expect(gw.seen.map((s) => s.batch.batchId)).toEqual(sent.map((b) => b.batchId));
  });
});
