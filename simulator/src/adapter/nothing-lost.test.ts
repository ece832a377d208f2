import { mkdtemp, readdir, rm } from 'node:fs/promises';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { encodeSamplesFloat32, type IngestBatch } from '@ebbgate/shared';
import { createIngestClient } from './index';

// Property (fast-check 4.11): whatever mix of answers the gateway gives — 202, 200, 503 with
// Retry-After, 500, 409, 422, a dropped connection — every batch ends either accepted or kept in
// rejected/, each monitor's accepted batches arrive in the order they were queued, and the spool
// holds nothing else afterwards. Bounded: 25 runs of up to 12 batches.
type Answer = 202 | 200 | 503 | 500 | 409 | 422 | 'drop';
const answers: Answer[] = [202, 200, 503, 500, 409, 422, 'drop'];

const batch = (monitorId: string, k: number): IngestBatch => ({
  monitorId,
  batchId: `${monitorId}-${k}`,
  startTime: new Date(Date.UTC(2026, 11, 1, 10, 0, 5 * k)).toISOString(),
  channels: [{ code: 'MDC_PRESS_BLD_ART_ABP', sampleRate: 125, samples: encodeSamplesFloat32([80, 90, 100, 90]) }],
});

describe('nothing is lost on the adapter side (property-based)', () => {
  it('ends every batch accepted or kept, in order per monitor, for any sequence of gateway answers', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.constantFrom(...answers), { minLength: 1, maxLength: 30 }),
        fc.integer({ min: 1, max: 6 }),
        fc.integer({ min: 1, max: 6 }),
        async (script, na, nb) => {
          let n = 0;
          const accepted: string[] = [];
          const server = http.createServer((req, res) => {
            let body = '';
            req.on('data', (c) => (body += c));
            req.on('end', () => {
              // After the script runs out the gateway is healthy, so every run can finish.
              const a = n < script.length ? script[n] : 202;
              n++;
              const b = JSON.parse(body) as IngestBatch;
              if (a === 'drop') return void req.socket.destroy();
              if (a === 202 || a === 200) accepted.push(b.batchId);
              res.writeHead(a, a === 503 ? { 'retry-after': '0' } : {}).end('{}');
            });
          });
          await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
          const spoolDir = await mkdtemp(path.join(os.tmpdir(), 'ebbgate-prop-'));
          const rejected: string[] = [];
          try {
            const client = await createIngestClient({
              gatewayUrl: `http://127.0.0.1:${(server.address() as AddressInfo).port}`,
              apiKeys: () => 'k',
              spoolDir,
              fsync: false,
              retry: { baseDelayMs: 2, maxDelayMs: 5, minDelayMs: 1 },
              onEvent: (e) => e.kind === 'rejected' && rejected.push(e.batchId),
            });
            const sent = [...Array.from({ length: na }, (_, k) => batch('A', k)), ...Array.from({ length: nb }, (_, k) => batch('B', k))];
            for (const b of sent) await client.send(b);
            await client.drain(20_000);
            await client.close();
            const firstAccepted = [...new Set(accepted)];
            // Every batch is accounted for exactly once: accepted or rejected, never both, never neither.
            expect([...firstAccepted, ...rejected].sort()).toEqual(sent.map((b) => b.batchId).sort());
            for (const m of ['A', 'B']) {
              const order = sent.filter((b) => b.monitorId === m && !rejected.includes(b.batchId)).map((b) => b.batchId);
              expect(firstAccepted.filter((id) => id.startsWith(`${m}-`))).toEqual(order);
              const files = await readdir(path.join(spoolDir, m)).catch(() => [] as string[]);
              expect(files.filter((f) => f.endsWith('.json'))).toEqual([]); // only rejected/ may remain
              const kept = await readdir(path.join(spoolDir, m, 'rejected')).catch(() => [] as string[]);
              expect(kept.filter((f) => !f.includes('answer')).length).toBe(rejected.filter((id) => id.startsWith(`${m}-`)).length);
            }
          } finally {
            await new Promise<void>((r) => server.close(() => r()));
            await rm(spoolDir, { recursive: true, force: true });
          }
        },
      ),
      { numRuns: 25 },
    );
  }, 120_000);
});
