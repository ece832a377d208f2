/**
 * Transaction bundles, the HL7 v2 second destination, two workers racing on one outbox
 * (FOR UPDATE SKIP LOCKED) and replay, against the mock EHR. Workers are driven by hand here.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '@ebbgate/mock-ehr';
import { createDataSource } from '../../src/db/data-source';
import { DeliveryAttemptRow, DeliveryRow } from '../../src/delivery/delivery.entities';
import { buildDelivery, FHIR_DESTINATION_ID, HL7_DESTINATION_ID, type DeliveryParts } from '../../src/delivery/delivery.module';
import type { TestGateway } from '../support/harness';
import {
  drainOutbox,
  engineResult,
  handDrivenDelivery,
  insertBedAndMonitor,
  startDeliveryStack,
  storeAssessment,
  windowStart,
  type DeliveryStack,
  type MockAdmin,
} from './support';

let stack: DeliveryStack;
let ehr: RunningMockEhr;
let gw: TestGateway;
let admin: MockAdmin;
let parts: DeliveryParts;
const IDENT = 'urn:ebbgate:observation|';

beforeAll(async () => {
  stack = await startDeliveryStack(
    (mock) => ({
      bundleSize: 10,
      claimBatch: 16,
      concurrency: 4,
      leaseSeconds: 30,
      retry: { limit: 5, baseMs: 20, maxMs: 100 },
      alerts: { enabled: false },
      hl7: { enabled: true, host: '127.0.0.1', port: mock.mllpPort, sendingFacility: 'HGH', receivingApplication: 'HGH-EHR' },
    }),
    { services: false },
  );
  ({ ehr, gw, admin } = stack);
  parts = await handDrivenDelivery(gw);
}, 60_000);

afterAll(async () => stack?.stop());

const drain = (...workers: DeliveryParts['worker'][]) => drainOutbox(workers, { rounds: 200, mustDrain: true });

const rowsOf = (ids: string[]) => gw.ctx.ds.getRepository(DeliveryRow).createQueryBuilder('d').where('d.assessment_id IN (:...ids)', { ids }).getMany();

describe('delivery modes', () => {
  it('sends FHIR rows in transaction bundles and the same results as ORU^R01 over MLLP', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-01');
    const a = [];
    for (let i = 0; i < 5; i++) a.push(await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(i)));
    await drain(parts.worker);
    const rows = await rowsOf(a.map((x) => x.id));
    expect(rows).toHaveLength(40); // 5 assessments × 4 indices × 2 destinations
    expect(rows.every((r) => r.status === 'delivered')).toBe(true);
    const fhirIds = rows.filter((r) => r.destinationId === FHIR_DESTINATION_ID).map((r) => r.id);
    const modes = await gw.ctx.ds.getRepository(DeliveryAttemptRow).createQueryBuilder('t').where('t.delivery_id IN (:...ids)', { ids: fhirIds }).getMany();
    expect(new Set(modes.map((m) => m.mode))).toEqual(new Set(['bundle']));
    const counts = await admin.observations();
    for (const r of rows.filter((x) => x.destinationId === FHIR_DESTINATION_ID)) expect(counts.byIdentifier[IDENT + r.identifier]).toBe(1);

    const hl7 = (await (await fetch(`${ehr.baseUrl}/_admin/hl7`)).json()) as { controlId: string; messageType: string; ackCode: string; message: string }[];
    const ours = hl7.filter((m) => rows.some((r) => r.destinationId === HL7_DESTINATION_ID && m.controlId === `${r.identifier}-create`));
    expect(ours).toHaveLength(20);
    for (const m of ours) {
      // We ask for enhanced-mode acknowledgement (MSH-15 AL, MSH-16 NE): commit accept is CA (HL7 v2 ch. 2).
      expect(m.ackCode).toBe('CA');
      expect(m.messageType).toMatch(/^ORU\^R01/);
      expect(m.message).toMatch(/\rPID\|\|\|HGH-400117\^\^\^HGH\^MR/); // MRN of ICU-01 in config/demo/hospital.json
    }
  });

  it('two workers on one outbox (SKIP LOCKED) never take the same row: one attempt each, no duplicate', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-02');
    const a = [];
    for (let i = 0; i < 10; i++) a.push(await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(i)));
    const ds2 = await createDataSource(gw.db.url, 4).initialize();
    try {
      const other = buildDelivery({ ...gw.ctx, ds: ds2 });
      await drain(parts.worker, other.worker);
    } finally {
      await ds2.destroy();
    }
    const rows = await rowsOf(a.map((x) => x.id));
    expect(rows).toHaveLength(80);
    expect(rows.every((r) => r.status === 'delivered' && r.attemptCount === 1)).toBe(true);
    expect((await admin.observations()).duplicated).toEqual([]);
  });

  it('replay of delivered rows resends them and the EHR still holds each identifier once (conditional create)', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-03');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    await drain(parts.worker);
    const fhir = (await rowsOf([a.id])).filter((r) => r.destinationId === FHIR_DESTINATION_ID);
    const operator = await gw.signIn('operator');
    const res = await operator.post('/api/v1/deliveries/replay', { ids: fhir.map((r) => String(r.id)) });
    expect(res.body.updated).toHaveLength(4);
    await drain(parts.worker);
    const after = (await rowsOf([a.id])).filter((r) => r.destinationId === FHIR_DESTINATION_ID);
    expect(after.every((r) => r.status === 'delivered' && r.attemptCount === 2)).toBe(true);
    const counts = await admin.observations();
    for (const r of after) expect(counts.byIdentifier[IDENT + r.identifier]).toBe(1);
    const detail = await operator.get(`/api/v1/deliveries/${after[0]!.id}`);
    expect(detail.body.attempts.map((t: { outcome: string }) => t.outcome)).toEqual(['created', 'delivered']);
  });

  it('a reviewer marking a result in error through the API amends what was delivered; the assessment shows what was sent', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-02');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    await drain(parts.worker);
    const reviewer = await gw.signIn('reviewer');
    const detail = await reviewer.get(`/api/v1/assessments/${a.id}`);
    expect(detail.status).toBe(200);
    const ppv = detail.body.observations.find((o: { index: string }) => o.index === 'ppv');
    expect(ppv.resource.resourceType).toBe('Observation');
    expect(ppv.deliveries.map((d: { status: string }) => d.status)).toEqual(['delivered', 'delivered']);
    const marked = await reviewer.post(`/api/v1/assessments/${a.id}/mark-in-error`, { reason: 'arterial line was being flushed' });
    expect(marked.status).toBe(200);
    await drain(parts.worker);
    const amends = (await rowsOf([a.id])).filter((r) => r.kind === 'amend');
    expect(amends).toHaveLength(8); // 4 indices × 2 destinations
    expect(amends.every((r) => r.status === 'delivered')).toBe(true);
    const fhirAmend = amends.find((r) => r.destinationId === FHIR_DESTINATION_ID)!;
    expect((fhirAmend.payload as { status: string; note: { text: string }[] }).status).toBe('entered-in-error');
    expect((fhirAmend.payload as { note: { text: string }[] }).note.at(-1)!.text).toContain('arterial line was being flushed');
    const hl7 = (await (await fetch(`${ehr.baseUrl}/_admin/hl7`)).json()) as { controlId: string; message: string }[];
    const wrong = hl7.filter((m) => amends.some((r) => r.destinationId === HL7_DESTINATION_ID && m.controlId === `${r.identifier}-amend`));
    expect(wrong).toHaveLength(4);
    for (const m of wrong)
      expect(
        m.message
          .split('\r')
          .find((x) => x.startsWith('OBX'))!
          .split('|')[11],
      ).toBe('W');
  });

  it('site settings chosen by an admin apply to the next results: withhold not-valid, send valid as final', async () => {
    const adminUser = await gw.signIn('admin');
    const current = (await adminUser.get('/api/v1/settings')).body;
    const put = await adminUser.put('/api/v1/settings', { ...current, delivery: { observationStatus: 'final', notValidPolicy: 'withhold' } });
    expect(put.status).toBe(200);
    await new Promise((r) => setTimeout(r, 3_100)); // settings are re-read at most every 3 s
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-03');
    const notValid = engineResult({ seed: 12, disturbances: [{ kind: 'spontaneous-breaths', count: 4 }] });
    expect(notValid.verdict).toBe('not-valid');
    const bad = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0), notValid);
    const good = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(2));
    await drain(parts.worker);
    const badRows = await rowsOf([bad.id]);
    // Indices the engine judged not valid (or could not compute) are withheld, never sent.
    for (const r of badRows) {
      const verdict = notValid.indexVerdicts[r.indexName as 'ppv'] ?? notValid.verdict;
      const value = notValid.indices[r.indexName as 'ppv'].value;
      expect(r.status).toBe(verdict === 'not-valid' || value === null ? 'withheld' : 'delivered');
    }
    expect(badRows.some((r) => r.status === 'withheld')).toBe(true);
    const goodFhir = (await rowsOf([good.id])).filter((r) => r.destinationId === FHIR_DESTINATION_ID && r.status === 'delivered');
    expect(goodFhir.length).toBeGreaterThan(0);
    expect(goodFhir.every((r) => (r.payload as { status: string }).status === 'final')).toBe(true);
  });

  it('a transaction Bundle rejected as a whole (422) is re-sent entry by entry, so good results still go', async () => {
    await admin.faults([{ scope: 'Bundle', errorRate: 1, statusCodes: [422], remaining: 1 }]);
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-04');
    const a = [];
    for (let i = 0; i < 3; i++) a.push(await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(i)));
    await drain(parts.worker);
    await admin.clearFaults();
    const fhir = (await rowsOf(a.map((x) => x.id))).filter((r) => r.destinationId === FHIR_DESTINATION_ID);
    expect(fhir.every((r) => r.status === 'delivered')).toBe(true);
    const attempts = await gw.ctx.ds
      .getRepository(DeliveryAttemptRow)
      .createQueryBuilder('t')
      .where('t.delivery_id IN (:...ids)', { ids: fhir.map((r) => r.id) })
      .getMany();
    expect(attempts.some((t) => t.mode === 'single')).toBe(true); // the fallback after the rejected bundle
    const counts = await admin.observations();
    for (const r of fhir) expect(counts.byIdentifier[IDENT + r.identifier]).toBe(1);
  });
});
