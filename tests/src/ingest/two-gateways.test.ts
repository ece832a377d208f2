import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateWindow, toIngestBatch } from '@ebbgate/shared/synthetic';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { corvaneProfile } from '@ebbgate/gateway/test/devices/fixtures';
import { DEMO_INTEGRATOR, signIn, spawnGateway, type GatewayProcess } from './gateway-process';
import { queryDatabase } from '../support/database';

let db: TestDatabase;
let a: GatewayProcess;
let b: GatewayProcess;
beforeAll(async () => {
  db = await createTestDatabase();
  const jwtSecret = randomBytes(32).toString('hex');
  // Started one after the other: the first applies the migrations.
  a = await spawnGateway({ databaseUrl: db.url, jwtSecret });
  b = await spawnGateway({ databaseUrl: db.url, jwtSecret });
});
afterAll(async () => {
  await Promise.all([a?.stop(), b?.stop()]);
  await db?.drop();
});

const query = <T>(sql: string, params: unknown[] = []) => queryDatabase<T>(db.url, sql, params);

const MONITORS = 6;
const SECONDS = 90; // 90 s each: 30-s windows every 10 s → 7 windows per monitor
const T0 = Date.parse('2026-11-30T13:00:00.000Z');

describe('two gateway processes on one database', () => {
  it('analyse every window exactly once between them, none skipped', async () => {
    const integrator = await signIn(a.url, DEMO_INTEGRATOR.username, DEMO_INTEGRATOR.password);
    const profile = await integrator.post('/profiles', corvaneProfile('Corvane cross-process'));
    expect(profile.status).toBe(201);
    const keys: { identifier: string; apiKey: string }[] = [];
    for (let i = 0; i < MONITORS; i++) {
      const identifier = `C0FFEE00000000${String(i).padStart(2, '0')}`;
      const m = await integrator.post('/monitors', { identifier, profileId: profile.body.id });
      const k = await integrator.post(`/monitors/${m.body.id}/api-key`);
      keys.push({ identifier, apiKey: k.body.apiKey });
    }
    // Batches alternate between the two processes, as behind a load balancer; each monitor's
    // batches go in order (like one adapter), the monitors in parallel.
    await Promise.all(
      keys.map(async (k, i) => {
        const w = generateWindow({ seed: 100 + i, durationSeconds: SECONDS, heartRate: 70 + i * 5, respiratoryRate: 14, ppv: 8 + i, channels: ['abp', 'paw'] });
        for (let t = 0; t < SECONDS; t += 10) {
          const slice = { ...w, channels: w.channels.map((c) => ({ ...c, samples: c.samples.slice(t * 125, (t + 10) * 125) })) };
          const body = toIngestBatch(slice, { monitorId: k.identifier, batchId: `x-${t}`, startTime: new Date(T0 + t * 1000).toISOString() });
          const target = (t / 10) % 2 === 0 ? a.url : b.url;
          const r = await fetch(`${target}/api/v1/ingest/batches`, {
            method: 'POST',
            headers: { authorization: `Bearer ${k.apiKey}`, 'content-type': 'application/json' },
            body: JSON.stringify(body),
          });
          if (r.status !== 202) throw new Error(`batch ${k.identifier} ${t}: ${r.status} ${await r.text()}`);
        }
      }),
    );
    const expected = MONITORS * ((SECONDS - 30) / 10 + 1);
    const until = Date.now() + 90_000;
    for (;;) {
      const [row] = await query<{ due: number; done: number }>("SELECT SUM(status = 'due') AS due, SUM(status = 'done') AS done FROM analysis_window");
      if ((Number(row!.due) === 0 && Number(row!.done) >= expected) || Date.now() > until) break;
      await new Promise((r) => setTimeout(r, 500));
    }
    const windows = await query<{ status: string; attempts: number; claimed_by: string; assessment_id: string }>(
      'SELECT status, attempts, claimed_by, assessment_id FROM analysis_window',
    );
    expect(windows).toHaveLength(expected); // none skipped: every fully covered window was planned
    expect(windows.every((w) => w.status === 'done' && w.attempts === 1 && w.assessment_id)).toBe(true);
    const dup = await query<{ n: number }>(
      'SELECT COUNT(*) AS n FROM (SELECT monitor_id, window_start, engine_version FROM assessment GROUP BY monitor_id, window_start, engine_version HAVING COUNT(*) > 1) d',
    );
    expect(Number(dup[0]!.n)).toBe(0);
    const [total] = await query<{ n: number }>('SELECT COUNT(*) AS n FROM assessment');
    expect(Number(total!.n)).toBe(expected);
    const workers = new Set(windows.map((w) => w.claimed_by.split(':')[1]));
    console.log(`two-gateways: ${expected} windows analysed once each; by ${workers.size} process(es): ${[...workers].join(', ')}`);
    expect(workers.size).toBeGreaterThanOrEqual(1);
  });
});
