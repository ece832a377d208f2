import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeSamplesFloat32 } from '@ebbgate/shared';
import { startTestGateway, type TestGateway } from '../support/harness';
import { registerMonitor } from '../devices/fixtures';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway({ ingest: { monitorBacklogLimit: 3, backlogLimit: 1000, retryAfterSeconds: 2 } });
});
afterAll(async () => gw?.stop());

const batch = (monitorId: string, id: string) => ({
  monitorId,
  batchId: id,
  startTime: '2026-12-01T10:00:00.000Z',
  channels: [{ code: 'PAW-RAW', sampleRate: 125, samples: encodeSamplesFloat32(new Float32Array(250)) }],
});

describe('per-monitor backlog quota', () => {
  it('makes only the monitor over its quota wait (429 with Retry-After); the others go on', async () => {
    const integrator = await gw.signIn('integrator');
    const flooded = await registerMonitor(integrator, '02EB6AFFFE00D001');
    const calm = await registerMonitor(integrator, '02EB6AFFFE00D002');
    // Four windows waiting for the flooded monitor: over its quota of 3, far under the global limit.
    for (let i = 0; i < 4; i++) {
      await gw.ctx.ds.query(
        "INSERT INTO analysis_window (monitor_id, window_start, window_end, engine_version, status, created_at) VALUES (?, ?, ?, 'x', 'due', ?)",
        [flooded.monitorId, new Date(Date.UTC(2026, 10, 1, 0, i)), new Date(Date.UTC(2026, 10, 1, 0, i, 30)), new Date()],
      );
    }
    const post = (key: string, body: unknown) =>
      request(gw.server)
        .post('/api/v1/ingest/batches')
        .set('Authorization', `Bearer ${key}`)
        .set('Content-Type', 'application/json')
        .send(JSON.stringify(body));
    const refused = await post(flooded.apiKey, batch('02EB6AFFFE00D001', 'q-1'));
    expect(refused.status).toBe(429);
    expect(refused.headers['retry-after']).toBe('2');
    expect(refused.body.detail).toMatch(/Monitor 02EB6AFFFE00D001 has over 3 analysis windows waiting/);
    expect((await post(calm.apiKey, batch('02EB6AFFFE00D002', 'q-2'))).status).toBe(202);
  });
});
