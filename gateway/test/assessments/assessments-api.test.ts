import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyseNextWindow, DEFAULT_ENGINE } from '../../src/analysis/analysis-worker';
import { assessmentEvents } from '../../src/assessments/events';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';
import { registerMonitor } from '../devices/fixtures';
import { sendRecording } from '../analysis/ingest-helpers';

let gw: TestGateway;
let integrator: SignedInClient;
let reviewer: SignedInClient;
let monitorA: string;
let monitorB: string;
let bedId: string;
const T0 = Date.parse('2026-11-30T12:00:00.000Z');

beforeAll(async () => {
  gw = await startTestGateway();
  integrator = await gw.signIn('integrator');
  reviewer = await gw.signIn('reviewer');
  bedId = (await integrator.post('/api/v1/beds', { name: 'Assess bed', unit: 'ICU', locationIdentifier: 'ICU-AS' })).body.id;
  const a = await registerMonitor(integrator, 'AACDEF0000000001');
  const b = await registerMonitor(integrator, 'AACDEF0000000002');
  monitorA = a.monitorId;
  monitorB = b.monitorId;
  await integrator.patch(`/api/v1/monitors/${monitorA}`, { bedId }).expect(200);
  // Monitor A: a clean regular rhythm; monitor B: an irregular rhythm (flagged by the engine).
  await sendRecording(gw, a.apiKey, 'AACDEF0000000001', T0, {
    seed: 21,
    durationSeconds: 40,
    heartRate: 80,
    respiratoryRate: 15,
    ppv: 13,
    channels: ['abp', 'paw'],
  });
  await sendRecording(gw, b.apiKey, 'AACDEF0000000002', T0, {
    seed: 22,
    durationSeconds: 40,
    heartRate: 95,
    respiratoryRate: 15,
    ppv: 13,
    channels: ['abp', 'paw'],
    disturbances: [{ kind: 'irregular-rhythm', variability: 0.3 }],
  });
  for (let i = 0; i < 20 && (await analyseNextWindow(gw.ctx, DEFAULT_ENGINE, 'test')); i++);
});
afterAll(async () => gw?.stop());

describe('GET /assessments', () => {
  it('lists assessments newest first with headline values, paginated', async () => {
    const res = await reviewer.get('/api/v1/assessments?pageSize=3');
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(4);
    expect(res.body.items).toHaveLength(3);
    const starts = res.body.items.map((i: { windowStart: string }) => i.windowStart);
    expect([...starts].sort().reverse()).toEqual(starts);
    expect(res.body.items[0]).toMatchObject({ engineVersion: DEFAULT_ENGINE.version, enteredInError: false });
    const page2 = await reviewer.get('/api/v1/assessments?pageSize=3&page=2');
    expect(page2.body.items).toHaveLength(1);
  });

  it('filters by monitor (id or identifier), bed, verdict, flag and time', async () => {
    const byId = (await reviewer.get(`/api/v1/assessments?monitor=${monitorA}`)).body;
    const byIdentifier = (await reviewer.get('/api/v1/assessments?monitor=AACDEF0000000001')).body;
    expect(byId.total).toBe(2);
    expect(byIdentifier.items.map((i: { id: string }) => i.id).sort()).toEqual(byId.items.map((i: { id: string }) => i.id).sort());
    expect((await reviewer.get(`/api/v1/assessments?bed=${bedId}`)).body.total).toBe(2);
    const all = (await reviewer.get('/api/v1/assessments')).body.items as { id: string; verdict: string; flags: string[] }[];
    for (const verdict of ['valid', 'questionable', 'not-valid']) {
      const n = all.filter((i) => i.verdict === verdict).length;
      expect((await reviewer.get(`/api/v1/assessments?verdict=${verdict}`)).body.total).toBe(n);
    }
    const someFlag = all.flatMap((i) => i.flags)[0];
    if (someFlag) {
      const flagged = (await reviewer.get(`/api/v1/assessments?flag=${someFlag}`)).body.items as { flags: string[] }[];
      expect(flagged.length).toBe(all.filter((i) => i.flags.includes(someFlag)).length);
      expect(flagged.every((i) => i.flags.includes(someFlag))).toBe(true);
    }
    const late = (await reviewer.get(`/api/v1/assessments?from=${new Date(T0 + 5_000).toISOString()}`)).body;
    expect(late.items.every((i: { windowStart: string }) => Date.parse(i.windowStart) >= T0 + 5_000)).toBe(true);
    expect(late.total).toBe(2);
    expect((await reviewer.get('/api/v1/assessments?verdict=maybe')).status).toBe(400);
  });
});

describe('GET /assessments/:id', () => {
  it('returns the full result with the waveform excerpt on the same time base as beats and cycles', async () => {
    const [first] = (await reviewer.get(`/api/v1/assessments?monitor=${monitorA}&order=asc`)).body.items;
    const res = await reviewer.get(`/api/v1/assessments/${first.id}`);
    expect(res.status).toBe(200);
    const { assessment, waveform } = res.body;
    expect(waveform.startTime).toBe(assessment.windowStart);
    const abp = waveform.channels.find((c: { role: string }) => c.role === 'abp');
    expect(abp.samples).toHaveLength(30 * 125);
    const beats = assessment.result.beats.abp.beats as { peakSample: number; sbp: number | null }[];
    expect(beats.length).toBeGreaterThan(0);
    // Each beat's peak sample indexes the plotted samples: the value there is the beat's systolic
    // pressure to within the engine's low-pass smoothing.
    const accepted = beats.filter((b) => b.sbp !== null);
    const diffs = accepted.map((b) => Math.abs(abp.samples[b.peakSample] - (b.sbp as number)));
    expect(Math.max(...diffs)).toBeLessThan(5);
    expect(assessment.result.cycles.every((c: { endSample: number }) => c.endSample <= 30 * 125)).toBe(true);
    expect((await reviewer.get('/api/v1/assessments/nope')).status).toBe(404);
  });
});

describe('POST /assessments/:id/mark-in-error', () => {
  it('lets a reviewer mark a result in error once, audited, calling the delivery hook', async () => {
    const [item] = (await reviewer.get(`/api/v1/assessments?monitor=${monitorB}`)).body.items;
    const seen: string[] = [];
    assessmentEvents(gw.ctx.ds).markedInError.push(async (_m, a, reason) => void seen.push(`${a.id}:${reason}`));
    expect((await integrator.post(`/api/v1/assessments/${item.id}/mark-in-error`, { reason: 'arterial line was flushed' })).status).toBe(403);
    const res = await reviewer.post(`/api/v1/assessments/${item.id}/mark-in-error`, { reason: 'arterial line was flushed' });
    assessmentEvents(gw.ctx.ds).markedInError.pop();
    expect(res.status).toBe(200);
    expect(res.body.enteredInError).toBe(true);
    expect(seen).toEqual([`${item.id}:arterial line was flushed`]);
    const detail = (await reviewer.get(`/api/v1/assessments/${item.id}`)).body.assessment;
    expect(detail).toMatchObject({
      enteredInError: true,
      enteredInErrorBy: gw.demoUser('reviewer').username,
      enteredInErrorReason: 'arterial line was flushed',
    });
    expect((await reviewer.post(`/api/v1/assessments/${item.id}/mark-in-error`, { reason: 'again please' })).status).toBe(409);
    expect((await reviewer.post(`/api/v1/assessments/${item.id}/mark-in-error`, {})).status).toBe(400);
    const audit = (await (await gw.signIn('admin')).get('/api/v1/audit?action=assessment.mark-in-error')).body.items;
    expect(audit.map((a: { entityId: string }) => a.entityId)).toContain(item.id);
  });
});
