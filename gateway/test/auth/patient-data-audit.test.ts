/** Reads of patient data (an assessment's detail, a raw inbound message) are audited with who and the request id. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyseNextWindow, DEFAULT_ENGINE } from '../../src/analysis/analysis-worker';
import { sendRecording } from '../analysis/ingest-helpers';
import { registerMonitor } from '../devices/fixtures';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';

let gw: TestGateway;
let integrator: SignedInClient;
let reviewer: SignedInClient;
const T0 = Date.parse('2026-11-30T12:00:00.000Z');

beforeAll(async () => {
  gw = await startTestGateway();
  integrator = await gw.signIn('integrator');
  reviewer = await gw.signIn('reviewer');
  const m = await registerMonitor(integrator, 'AACDEF0000000071');
  await sendRecording(gw, m.apiKey, 'AACDEF0000000071', T0, {
    seed: 71,
    durationSeconds: 40,
    heartRate: 80,
    respiratoryRate: 15,
    ppv: 12,
    channels: ['abp', 'paw'],
  });
  for (let i = 0; i < 20 && (await analyseNextWindow(gw.ctx, DEFAULT_ENGINE, 'test')); i++);
});
afterAll(async () => gw?.stop());

const reads = async (action: string, entityId: string) =>
  (await gw.ctx.ds.query('SELECT actor_name AS actorName, request_id AS requestId FROM audit_entry WHERE action = ? AND entity_id = ?', [
    action,
    entityId,
  ])) as { actorName: string; requestId: string }[];

describe('audit of patient-data reads', () => {
  it('records each read of an assessment detail', async () => {
    const list = await reviewer.get('/api/v1/assessments?pageSize=1').expect(200);
    const id = list.body.items[0]?.id as string;
    expect(id).toBeTruthy();
    expect(await reads('assessment.read', id)).toEqual([]); // listing is not a read of the detail
    await reviewer.get(`/api/v1/assessments/${id}`).set('X-Request-Id', 'read-assess-1').expect(200);
    await reviewer.get(`/api/v1/assessments/${id}`).set('X-Request-Id', 'read-assess-2').expect(200);
    expect(await reads('assessment.read', id)).toEqual([
      { actorName: gw.demoUser('reviewer').username, requestId: 'read-assess-1' },
      { actorName: gw.demoUser('reviewer').username, requestId: 'read-assess-2' },
    ]);
  });

  it('records each read of a raw inbound message', async () => {
    const list = await integrator.get('/api/v1/inbound-messages?pageSize=1').expect(200);
    const id = list.body.items[0]?.id as string;
    expect(id).toBeTruthy();
    const detail = await integrator.get(`/api/v1/inbound-messages/${id}`).set('X-Request-Id', 'read-raw-1').expect(200);
    expect(typeof detail.body.raw).toBe('string');
    expect(await reads('inbound.read-raw', id)).toEqual([{ actorName: gw.demoUser('integrator').username, requestId: 'read-raw-1' }]);
  });
});
