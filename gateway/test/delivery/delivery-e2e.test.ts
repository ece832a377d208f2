/**
 * End to end against the mock EHR (FHIR R4 server with OAuth2, fault injection, SMTP catcher):
 * real gateway, real MariaDB, real outbox worker and alert watcher.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '@ebbgate/mock-ehr';
import { DeliveryRow, DestinationRow } from '../../src/delivery/delivery.entities';
import { FHIR_DESTINATION_ID } from '../../src/delivery/delivery.module';
import type { TestGateway } from '../support/harness';
import {
  insertBedAndMonitor,
  markInError,
  mockEhrToken,
  QUICK_DELIVERY,
  startDeliveryStack,
  storeAssessment,
  waitFor,
  windowStart,
  type DeliveryStack,
  type MockAdmin,
} from './support';

let stack: DeliveryStack;
let ehr: RunningMockEhr;
let gw: TestGateway;
let admin: MockAdmin;
const IDENT = 'urn:ebbgate:observation|';

beforeAll(async () => {
  stack = await startDeliveryStack(
    () => ({
      ...QUICK_DELIVERY,
      circuit: { failureThreshold: 5, openSeconds: 0.3 },
      alerts: {
        enabled: true,
        checkIntervalMs: 100,
        destinationDownMinutes: 0.01,
        failureThreshold: 1000,
        failureWindowMinutes: 60,
        recipients: ['icu-oncall@harrowmere.example'],
        consoleUrl: 'http://console.harrowmere.example',
      },
    }),
    { services: true },
  );
  ({ ehr, gw, admin } = stack);
}, 60_000);

afterAll(async () => stack?.stop());

const rowsOf = (assessmentIds: string[]) =>
  gw.ctx.ds.getRepository(DeliveryRow).createQueryBuilder('d').where('d.assessment_id IN (:...ids)', { ids: assessmentIds }).getMany();
const allSettled =
  (ids: string[], statuses = ['delivered', 'withheld']) =>
  async () => {
    const rows = await rowsOf(ids);
    return rows.length > 0 && rows.every((r) => statuses.includes(r.status)) ? rows : undefined;
  };

describe('delivery to the mock EHR', () => {
  it('delivers one Observation per index per assessment, with subject, encounter and one Device per monitor', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-01');
    const a = [];
    for (let i = 0; i < 3; i++) a.push(await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(i)));
    const rows = await waitFor('all delivered', allSettled(a.map((x) => x.id)));
    expect(rows).toHaveLength(12);
    const counts = await admin.observations();
    for (const r of rows) expect(counts.byIdentifier[IDENT + r.identifier]).toBe(1);
    const obs = rows[0]!.payload as { subject: { reference: string }; encounter: { reference: string }; device: { reference: string } };
    // config/demo/hospital.json: ICU-01 holds MRN HGH-400117 in encounter enc-icu-01.
    expect(obs.subject.reference).toBe('Patient/patient-hgh-400117');
    expect(obs.encounter.reference).toBe('Encounter/enc-icu-01');
    expect(new Set(rows.map((r) => (r.payload as { device: { reference: string } }).device.reference)).size).toBe(1);
    // The assessment shows the patient the EHR filed it under.
    const stored = (await gw.ctx.ds.query('SELECT patient_ref FROM assessment WHERE id IN (?)', [a.map((x) => x.id)])) as { patient_ref: string }[];
    expect(stored.map((r) => r.patient_ref)).toEqual(['Patient/patient-hgh-400117', 'Patient/patient-hgh-400117', 'Patient/patient-hgh-400117']);
  });

  it('outage → backlog → recovery: every result delivered exactly once, one alert mail and one all-clear', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-02');
    await admin.faults([
      { scope: 'Observation', errorRate: 1, statusCodes: [503, 502, 504], retryAfterSeconds: 0 },
      { scope: 'all', timeoutRate: 0 },
    ]);
    const a = [];
    for (let i = 0; i < 5; i++) a.push(await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(i)));
    const down = await waitFor('destination down with an open circuit', async () => {
      const d = await gw.ctx.ds.getRepository(DestinationRow).findOneBy({ id: FHIR_DESTINATION_ID });
      return d?.downSince && d.circuitState !== 'closed' ? d : undefined;
    });
    expect(down.consecutiveFailures).toBeGreaterThanOrEqual(5);
    await waitFor('the down alert mail', async () => (await admin.mail()).some((m) => /is down/.test(m.subject)));
    const backlog = await rowsOf(a.map((x) => x.id));
    expect(backlog.every((r) => r.status === 'pending')).toBe(true);
    expect(backlog.some((r) => r.attemptCount > 0)).toBe(true);

    await admin.clearFaults();
    const rows = await waitFor('backlog delivered', allSettled(a.map((x) => x.id)), 30_000);
    const counts = await admin.observations();
    for (const r of rows) expect(counts.byIdentifier[IDENT + r.identifier]).toBe(1);
    expect(counts.duplicated).toEqual([]);
    // Circuit breaker: a trial send in half-open succeeded, so it is closed and the destination up.
    const healed = await gw.ctx.ds.getRepository(DestinationRow).findOneByOrFail({ id: FHIR_DESTINATION_ID });
    expect([healed.circuitState, healed.downSince, healed.consecutiveFailures]).toEqual(['closed', null, 0]);
    await waitFor('the all-clear mail', async () => (await admin.mail()).some((m) => /^\[Ebbgate\] Cleared: .* was down/.test(m.subject)));
    // A few more checks pass: still one mail per incident.
    await new Promise((r) => setTimeout(r, 400));
    const mails = await admin.mail();
    expect(mails.filter((m) => /EHR \(FHIR R4\) is down/.test(m.subject))).toHaveLength(1);
    expect(mails.filter((m) => /Cleared: EHR \(FHIR R4\) was down/.test(m.subject))).toHaveLength(1);
    const alert = mails.find((m) => /is down/.test(m.subject))!;
    expect(alert.to).toContain('icu-oncall@harrowmere.example');
    // The console screen by its name and route (admin-ui/src/app/routes.ts: /deliveries, nav "Deliveries").
    expect(alert.text).toContain('Open the Deliveries screen of the Ebbgate console');
    expect(alert.text).toContain('http://console.harrowmere.example/deliveries');
  });

  it('422 fails at once with the OperationOutcome kept; an operator sees it, retries it (audited) and it is delivered', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-03');
    await admin.faults([{ scope: 'Observation', errorRate: 1, statusCodes: [422], remaining: 1 }]);
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    await waitFor('three delivered, one failed', async () => {
      const rows = await rowsOf([a.id]);
      return rows.filter((r) => r.status === 'failed').length === 1 && rows.filter((r) => r.status === 'delivered').length === 3;
    });
    const failed = (await rowsOf([a.id])).find((r) => r.status === 'failed')!;
    expect(failed.tries).toBe(1); // not retried: 4xx other than 408/429 is final (FHIR R4 http.html)

    const operator = await gw.signIn('operator');
    const list = await operator.get(`/api/v1/deliveries?status=failed&assessment=${a.id}`);
    expect(list.status).toBe(200);
    expect(list.body.items.map((d: { id: string }) => d.id)).toEqual([String(failed.id)]);
    const detail = await operator.get(`/api/v1/deliveries/${failed.id}`);
    expect(detail.body.payload.resourceType).toBe('Observation');
    expect(detail.body.attempts).toHaveLength(1);
    expect(detail.body.attempts[0]).toMatchObject({ httpStatus: 422, outcome: 'rejected' });
    expect(detail.body.attempts[0].response.resourceType).toBe('OperationOutcome');

    const retry = await operator.post('/api/v1/deliveries/retry', { ids: [String(failed.id)] });
    expect(retry.body.updated).toEqual([String(failed.id)]);
    await waitFor('retried row delivered', async () => (await gw.ctx.ds.getRepository(DeliveryRow).findOneBy({ id: failed.id }))?.status === 'delivered');
    const adminUser = await gw.signIn('admin');
    const audit = await adminUser.get(`/api/v1/audit?action=delivery.retry&entityId=${failed.id}`);
    expect(audit.body.items).toHaveLength(1);
    expect((await admin.observations()).byIdentifier[IDENT + failed.identifier]).toBe(1);
  });

  it('a bed with no in-progress encounter waits as waiting-context (not failed) and is delivered once a patient is admitted', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-05'); // empty in config/demo/hospital.json
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    await waitFor('waiting-context', allSettled([a.id], ['waiting-context']));
    const token = await mockEhrToken(ehr);
    const post = (type: string, body: object) =>
      fetch(`${ehr.fhirBaseUrl}/${type}`, {
        method: 'POST',
        headers: { authorization: `Bearer ${token}`, 'content-type': 'application/fhir+json' },
        body: JSON.stringify(body),
      }).then((r) => r.json() as Promise<{ id: string }>);
    const patient = await post('Patient', {
      resourceType: 'Patient',
      name: [{ family: 'Ashgrove', given: ['Wren'] }],
      gender: 'female',
      identifier: [
        { type: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/v2-0203', code: 'MR' }] }, system: 'urn:ebbgate:demo:mrn', value: 'HGH-409901' },
      ],
    });
    // An encounter without period.start says nothing about when the patient arrived: never used.
    const undated = await post('Encounter', {
      resourceType: 'Encounter',
      status: 'in-progress',
      class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP' },
      subject: { reference: `Patient/${patient.id}` },
      location: [{ location: { reference: 'Location/icu-05' } }],
    });
    const refused = await waitFor('the undated encounter refused by name', async () => {
      const r = (await rowsOf([a.id]))[0];
      return r?.status === 'waiting-context' && r.lastError?.includes(`Encounter/${undated.id}`) ? r : undefined;
    });
    expect(refused.lastError).toMatch(/without period\.start refused/);
    // Admitted (recorded as such) before the window began: filed to that patient, with name and MRN.
    await post('Encounter', {
      resourceType: 'Encounter',
      status: 'in-progress',
      class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP' },
      subject: { reference: `Patient/${patient.id}` },
      period: { start: new Date(windowStart(0).getTime() - 60_000).toISOString() },
      location: [{ location: { reference: 'Location/icu-05' } }],
    });
    const rows = await waitFor('delivered after admission', allSettled([a.id]));
    expect((rows[0]!.payload as { subject: { reference: string } }).subject.reference).toBe(`Patient/${patient.id}`);
    expect(rows[0]!.patientName).toBe('Wren Ashgrove');
    expect(rows[0]!.patientMrn).toBe('HGH-409901');
    const stored = (await gw.ctx.ds.query('SELECT patient_name AS n, patient_mrn AS m FROM assessment WHERE id = ?', [a.id])) as { n: string; m: string }[];
    expect(stored[0]).toEqual({ n: 'Wren Ashgrove', m: 'HGH-409901' });
  });

  it('a window from before the current encounter began is not filed to that patient (waits for context)', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-01');
    // The mock's seeded encounters began three hours before it started; this window is older.
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, new Date(Date.now() - 6 * 3_600_000));
    const rows = await waitFor('waiting-context', allSettled([a.id], ['waiting-context']));
    expect(rows[0]!.lastError).toMatch(/no encounter at ICU-01 covers/);
    expect(rows.every((r) => r.payload === null)).toBe(true);
  });

  it('marking a delivered result in error sends the amended resource with status entered-in-error', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-04');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    const created = await waitFor('delivered', allSettled([a.id]));
    await markInError(gw.ctx.ds, a, 'reviewer', 'monitor was on the wrong patient');
    await waitFor('amendments delivered', async () => {
      const rows = (await rowsOf([a.id])).filter((r) => r.kind === 'amend');
      return rows.length === 4 && rows.every((r) => r.status === 'delivered');
    });
    const token = await mockEhrToken(ehr);
    for (const r of created) {
      const res = await fetch(`${ehr.fhirBaseUrl}/Observation/${r.serverId}`, { headers: { authorization: `Bearer ${token}` } });
      const body = (await res.json()) as { status: string; identifier: { value: string }[] };
      expect(body.status).toBe('entered-in-error');
      expect(body.identifier[0].value).toBe(r.identifier);
    }
    expect((await admin.observations()).duplicated).toEqual([]);
  });

  it('403 marks the destination misconfigured and mails once; pause and resume are audited', async () => {
    await admin.faults([{ scope: 'Observation', errorRate: 1, statusCodes: [403] }]);
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-01');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    await waitFor('configuration alert mail', async () => (await admin.mail()).some((m) => /rejects the configured credentials/.test(m.subject)));
    const operator = await gw.signIn('operator');
    const dests = await operator.get('/api/v1/destinations');
    expect(dests.body.find((d: { id: string }) => d.id === FHIR_DESTINATION_ID).state).toMatch(/misconfigured/);

    expect((await operator.post(`/api/v1/destinations/${FHIR_DESTINATION_ID}/pause`)).body.paused).toBe(true);
    await new Promise((r) => setTimeout(r, 300)); // a pass that began before the pause finishes (with 403s)
    await admin.clearFaults();
    await new Promise((r) => setTimeout(r, 500));
    expect((await rowsOf([a.id])).some((r) => r.status === 'delivered')).toBe(false); // paused: nothing goes out
    expect((await operator.post(`/api/v1/destinations/${FHIR_DESTINATION_ID}/resume`)).body.paused).toBe(false);
    await waitFor('delivered after resume', allSettled([a.id]), 30_000);
    const adminUser = await gw.signIn('admin');
    const audit = await adminUser.get('/api/v1/audit?action=destination.');
    expect(audit.body.items.map((e: { action: string }) => e.action).sort()).toEqual(['destination.pause', 'destination.resume']);
    expect((await admin.mail()).filter((m) => /rejects the configured credentials/.test(m.subject))).toHaveLength(1);
  });

  it('failures past the threshold mail the on-call list once; an operator discards a failed message with a reason (audited)', async () => {
    const adminUser = await gw.signIn('admin');
    const current = (await adminUser.get('/api/v1/settings')).body;
    expect(
      (await adminUser.put('/api/v1/settings', { ...current, alerts: { ...current.alerts, destinationDownMinutes: 1, failureThreshold: 3 } })).status,
    ).toBe(200);
    await new Promise((r) => setTimeout(r, 3_100)); // settings are re-read at most every 3 s
    await admin.faults([{ scope: 'Observation', errorRate: 1, statusCodes: [400] }]);
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-02');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(0));
    await waitFor('all four failed', allSettled([a.id], ['failed']));
    await admin.clearFaults();
    await waitFor('failures alert mail', async () => (await admin.mail()).some((m) => /failed deliveries past the threshold/.test(m.subject)));
    await new Promise((r) => setTimeout(r, 400));
    expect((await admin.mail()).filter((m) => /failed deliveries past the threshold/.test(m.subject))).toHaveLength(1);

    const operator = await gw.signIn('operator');
    const [one] = await rowsOf([a.id]);
    const res = await operator.post(`/api/v1/deliveries/${one!.id}/discard`, { reason: 'duplicate of a manual chart entry' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'discarded', discardReason: 'duplicate of a manual chart entry' });
    const audit = await adminUser.get(`/api/v1/audit?action=delivery.discard&entityId=${one!.id}`);
    expect(audit.body.items).toHaveLength(1);
    expect((await operator.post(`/api/v1/deliveries/${one!.id}/discard`, { reason: 'again' })).status).toBe(409);
  });

  it('readiness reports the EHR as a non-critical check (an EHR outage does not make the gateway unready); attempts are counted in /metrics', async () => {
    const up = await fetch(`${gw.url}/readyz`).then((r) => r.json() as Promise<{ status: string; checks: { name: string; critical: boolean; ok: boolean }[] }>);
    expect(up.checks.find((c) => c.name === 'ehr')).toEqual({ name: 'ehr', critical: false, ok: true });
    await admin.faults([{ scope: 'metadata', errorRate: 1, statusCodes: [503] }]);
    const res = await fetch(`${gw.url}/readyz`);
    const down = (await res.json()) as typeof up;
    await admin.clearFaults();
    expect(res.status).toBe(200);
    expect(down.status).toBe('ready');
    expect(down.checks.find((c) => c.name === 'ehr')!.ok).toBe(false);
    const metrics = await fetch(`${gw.url}/metrics`).then((r) => r.text());
    expect(metrics).toMatch(/ebbgate_delivery_attempts_total\{destination="ehr-fhir",outcome="created"\} [1-9]/);
    expect(metrics).toMatch(/ebbgate_delivery_lag_seconds\{destination="ehr-fhir"\} \d/);
    expect(metrics).toMatch(/# TYPE ebbgate_delivery_claims_expired_total counter/);
    expect(metrics).toMatch(/# TYPE ebbgate_delivery_fencing_refusals_total counter/);
  });

  it('the reviewer cannot retry and the operator cannot discard a delivered result', async () => {
    const reviewer = await gw.signIn('reviewer');
    expect((await reviewer.post('/api/v1/deliveries/retry', { ids: ['1'] })).status).toBe(403);
    const operator = await gw.signIn('operator');
    const delivered = await operator.get('/api/v1/deliveries?status=delivered&pageSize=1');
    const res = await operator.post(`/api/v1/deliveries/${delivered.body.items[0].id}/discard`, { reason: 'test' });
    expect(res.status).toBe(409);
    expect(res.headers['content-type']).toMatch(/problem\+json/);
  });
});
