import { mkdtemp, readdir, rm, utimes } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import type { IngestBatch } from '@ebbgate/shared';
import { BatchSender, BatchSpool } from './index';
import type { BatchTransport, SendOutcome } from './transport';

// A scripted transport stands in for the gateway: it says what each attempt's outcome is.
function scripted(outcome: (batch: IngestBatch, n: number) => SendOutcome): BatchTransport & { sent: string[] } {
  const sent: string[] = [];
  return { name: 'scripted', sent, send: async (b) => (sent.push(b.batchId), outcome(b, sent.length)) };
}

const batch = (k: number): IngestBatch => ({
  monitorId: '02EB6AFFFE0000A1',
  batchId: `b-${k}`,
  startTime: new Date(Date.UTC(2026, 11, 1, 10, 0, k)).toISOString(),
  channels: [{ code: 'X', sampleRate: 1, samples: [1] }],
});

const dirs: string[] = [];
afterEach(async () => {
  for (const d of dirs.splice(0)) await rm(d, { recursive: true, force: true });
});
async function tempDir() {
  const d = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-rej-'));
  dirs.push(d);
  return d;
}
const rejectedFiles = async (dir: string) =>
  (await readdir(path.join(dir, encodeURIComponent('02EB6AFFFE0000A1'), 'rejected'))).filter((n) => /^\d+\.json$/.test(n)).sort();

describe('refused batches in the adapter spool', () => {
  it('keeps at most maxPerMonitor refused batches (oldest go first) and counts what it dropped', async () => {
    const dir = await tempDir();
    const t = scripted(() => ({ kind: 'rejected', reason: 'refused' }));
    const sender = await BatchSender.open({ transport: t, spoolDir: dir, fsync: false, rejected: { maxPerMonitor: 3 } });
    for (let k = 0; k < 5; k++) await sender.send(batch(k));
    await sender.drain(5000);
    await sender.close();
    expect(t.sent).toEqual(['b-0', 'b-1', 'b-2', 'b-3', 'b-4']);
    expect(await rejectedFiles(dir)).toEqual(['000000000002.json', '000000000003.json', '000000000004.json']);
    expect(sender.stats).toMatchObject({ rejected: 5, rejectedDropped: 2 });
  });

  it('ages refused batches out, but never a batch still waiting to be sent', async () => {
    const dir = await tempDir();
    const t = scripted((b) => (b.batchId === 'b-0' ? { kind: 'rejected', reason: 'refused' } : { kind: 'retry', reason: 'gateway away' }));
    const sender = await BatchSender.open({ transport: t, spoolDir: dir, fsync: false, retry: { baseDelayMs: 5_000, minDelayMs: 5_000, maxDelayMs: 5_000 } });
    await sender.send(batch(0));
    await sender.send(batch(1));
    await new Promise((r) => setTimeout(r, 200));
    await sender.close();
    const monitorDir = path.join(dir, encodeURIComponent('02EB6AFFFE0000A1'));
    const old = new Date(Date.now() - 40 * 86_400_000);
    for (const n of await readdir(monitorDir)) if (n !== 'rejected') await utimes(path.join(monitorDir, n), old, old);
    for (const n of await readdir(path.join(monitorDir, 'rejected'))) await utimes(path.join(monitorDir, 'rejected', n), old, old);
    const spool = new BatchSpool(dir, false, { maxPerMonitor: 1000, maxAgeMs: 30 * 86_400_000 });
    const { batches } = await spool.load();
    expect(await rejectedFiles(dir)).toEqual([]);
    expect(spool.rejectedDropped).toBe(1);
    // The unsent batch is 40 days old too, and still there to be sent.
    expect(batches.map((b) => b.batch.batchId)).toEqual(['b-1']);
  });
});
