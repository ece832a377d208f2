import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { insertMonitor } from '../support/devices';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

describe('overview', () => {
  it('counts assessments by verdict in the last hour, in per-minute buckets', async () => {
    const monitor = await insertMonitor(gw.ctx.ds);
    const now = Date.now();
    const verdicts = ['valid', 'valid', 'questionable', 'not-valid'];
    for (const [i, verdict] of verdicts.entries()) {
      const end = new Date(now - i * 30_000);
      await gw.ctx.ds.query(
        `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, flags, result, created_at) VALUES (?, ?, NULL, ?, ?, 'test', ?, '[]', '{}', NOW(3))`,
        [randomUUID(), monitor.id, new Date(end.getTime() - 30_000), end, verdict],
      );
    }
    // Two hours old: outside the window.
    await gw.ctx.ds.query(
      `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, flags, result, created_at) VALUES (?, ?, NULL, ?, ?, 'test', 'valid', '[]', '{}', NOW(3))`,
      [randomUUID(), monitor.id, new Date(now - 7_230_000), new Date(now - 7_200_000)],
    );
    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get('/api/v1/overview').expect(200);
    expect(res.body.assessments).toMatchObject({ valid: 2, questionable: 1, notValid: 1 });
    expect(res.body.assessments.series).toHaveLength(60);
    const total = res.body.assessments.series.reduce(
      (a: number, b: { valid: number; questionable: number; notValid: number }) => a + b.valid + b.questionable + b.notValid,
      0,
    );
    expect(total).toBe(4);
    expect(res.body.monitors.total).toBe(1);
  });
});
