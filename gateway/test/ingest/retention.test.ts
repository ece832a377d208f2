import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeSamplesFloat32 } from '@ebbgate/shared';
import request from 'supertest';
import { purgeExpired } from '../../src/ingest/retention';
import { startTestGateway, type TestGateway } from '../support/harness';
import { registerMonitor } from '../devices/fixtures';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway({ ingest: { retentionDays: 1 } });
});
afterAll(async () => gw?.stop());

describe('retention purge', () => {
  it('deletes segments, messages and finished windows older than the retention, keeping quarantined messages', async () => {
    const integrator = await gw.signIn('integrator');
    const m = await registerMonitor(integrator, 'FEDC000000000001');
    const post = (body: unknown) => request(gw.server).post('/api/v1/ingest/batches').set('Authorization', `Bearer ${m.apiKey}`).set('Content-Type', 'application/json').send(JSON.stringify(body));
    const batch = (id: string, start: string) => ({ monitorId: 'FEDC000000000001', batchId: id, startTime: start, channels: [{ code: 'PAW-RAW', sampleRate: 125, samples: encodeSamplesFloat32(new Float32Array(1250)) }] });
    await post(batch('old', '2026-11-20T00:00:00.000Z')).expect(202);
    await post('not json').expect(400);
    const now = new Date();
    await post(batch('new', new Date(now.getTime() - 60_000).toISOString())).expect(202);
    // Pretend the first two arrived ten days ago.
    await gw.ctx.ds.query("UPDATE inbound_message SET received_at = ? WHERE batch_id = 'old' OR outcome = 'quarantined'", [new Date(now.getTime() - 10 * 86_400_000)]);
    const counts = await purgeExpired(gw.ctx, now);
    expect(counts.segments).toBe(1);
    expect(counts.inboundMessages).toBe(1);
    const left = await gw.ctx.ds.query('SELECT outcome, batch_id FROM inbound_message ORDER BY id');
    expect(left).toEqual([
      { outcome: 'quarantined', batch_id: null },
      { outcome: 'accepted', batch_id: 'new' },
    ]);
    const segs = await gw.ctx.ds.query('SELECT COUNT(*) AS n FROM waveform_segment');
    expect(Number(segs[0].n)).toBe(1);
  });
});
