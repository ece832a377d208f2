import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

describe('site settings', () => {
  it('default to three cycles per window and bands that each name their source', async () => {
    const reviewer = await gw.signIn('reviewer');
    const res = await reviewer.get('/api/v1/settings').expect(200);
    // Common practice: most authors average three consecutive respiratory cycles.
    expect(res.body.analysis.cyclesToAverage).toBe(3);
    expect(res.body.analysis.bands.length).toBeGreaterThan(0);
    for (const band of res.body.analysis.bands) expect(band.source.length).toBeGreaterThan(3);
    // Michard 2000: PPV 13 % threshold.
    expect(
      res.body.analysis.bands.some((b: { index: string; lower: number; source: string }) => b.index === 'ppv' && b.lower === 13 && /Michard/.test(b.source)),
    ).toBe(true);
  });

  it('are changed by an admin only, validated, and audited per section', async () => {
    const admin = await gw.signIn('admin');
    const current = (await admin.get('/api/v1/settings')).body;
    const next = {
      ...current,
      analysis: { ...current.analysis, cyclesToAverage: 5 },
      alerts: { ...current.alerts, recipients: ['night-lead@harrowmere.example'] },
    };
    const saved = await admin.put('/api/v1/settings', next).expect(200);
    expect(saved.body.analysis.cyclesToAverage).toBe(5);
    const bad = await admin.put('/api/v1/settings', { ...next, alerts: { ...next.alerts, recipients: ['not an address'] } });
    expect(bad.status).toBe(400);
    expect(bad.body.errors[0].path).toBe('alerts.recipients.0');
    const sourceless = await admin.put('/api/v1/settings', { ...next, analysis: { ...next.analysis, bands: [{ ...next.analysis.bands[0], source: '' }] } });
    expect(sourceless.status).toBe(400);
    const operator = await gw.signIn('operator');
    expect((await operator.put('/api/v1/settings', next)).status).toBe(403);
    const audit = (await admin.get('/api/v1/audit?entityType=settings&order=asc')).body.items;
    expect(audit.map((a: { entityId: string }) => a.entityId)).toEqual(['analysis', 'alerts']);
    expect(audit[0].before.cyclesToAverage).toBe(3);
    expect(audit[0].after.cyclesToAverage).toBe(5);
  });
});
