/**
 * Delivery correctness under bed changes, odd EHR answers, withdrawn results and slow receivers,
 * against the mock EHR with the real outbox (workers driven by hand). Each case failed before its fix:
 * - context in force at the window's time (transfer, discharge and admission; undated encounters);
 * - the server id from any form of Location, else by identifier; an amendment whose original
 *   cannot be found is failed with an alert, never discarded;
 * - retry and replay refuse results marked entered in error (409, audited);
 * - HL7 v2: lease renewal and a fencing token, so a slow pass is never resent by another worker
 *   (the receiver counts MSH-10 control ids);
 * - alert mail is an outbox row: a process dying after the claim leaves it due, one Message-ID.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '@ebbgate/mock-ehr';
import { createDataSource } from '../../src/db/data-source';
import { AlertWatcher, EDGE_SOURCE } from '../../src/delivery/alert-watcher';
import { defaultCodeMap } from '../../src/delivery/code-map';
import { AlertMailRow, DeliveryRow } from '../../src/delivery/delivery.entities';
import { buildDelivery, FHIR_DESTINATION_ID, HL7_DESTINATION_ID, type DeliveryParts } from '../../src/delivery/delivery.module';
import { Hl7Destination } from '../../src/delivery/hl7-destination';
import { claimDueFenced, recordAttempts } from '../../src/delivery/outbox';
import { recordInbound } from '../../src/ingest/inbound-store';
import type { Mailer } from '../../src/mail/mailer';
import type { TestGateway } from '../support/harness';
import {
  drainOutbox,
  handDrivenDelivery,
  insertBedAndMonitor,
  markInError,
  mockEhrToken,
  startDeliveryStack,
  storeAssessment,
  waitFor,
  windowStart,
  type DeliveryStack,
} from './support';

let stack: DeliveryStack;
let ehr: RunningMockEhr;
let gw: TestGateway;
let parts: DeliveryParts;
const adminCall = (method: string, path: string, body?: object) => stack.admin.call(method, path, body);

beforeAll(async () => {
  stack = await startDeliveryStack(
    (mock) => ({
      bundleSize: 1,
      claimBatch: 8,
      concurrency: 4,
      leaseSeconds: 1,
      requestTimeoutMs: 10_000,
      retry: { limit: 5, baseMs: 20, maxMs: 100 },
      // Rows waiting for context are not looked at again within a test (drains end when nothing else is due).
      patientContext: { cacheSeconds: 600, retrySeconds: 60 },
      alerts: {
        enabled: false,
        checkIntervalMs: 100,
        downMinutes: 10,
        failureThreshold: 1000,
        failureWindowMinutes: 60,
        recipients: ['icu-oncall@harrowmere.example'],
        consoleUrl: 'http://console.harrowmere.example',
      },
      hl7: { enabled: true, host: '127.0.0.1', port: mock.mllpPort, sendingFacility: 'HGH', receivingApplication: 'HGH-EHR' },
    }),
    { services: false },
  );
  ({ ehr, gw } = stack);
  parts = await handDrivenDelivery(gw);
}, 60_000);

afterAll(async () => stack?.stop());

/** Up to 100 rounds, 20 ms apart: rows held back (lease, backoff) may still be due afterwards. */
const drain = (...workers: DeliveryParts['worker'][]) => drainOutbox(workers, { rounds: 100, pauseMs: 20 });

const fhirRows = (ids: string[]) =>
  gw.ctx.ds
    .getRepository(DeliveryRow)
    .createQueryBuilder('d')
    .where('d.assessment_id IN (:...ids)', { ids })
    .andWhere('d.destination_id = :d', { d: FHIR_DESTINATION_ID })
    .orderBy('d.id')
    .getMany();
const subjectOf = (r: DeliveryRow) => (r.payload as { subject?: { reference?: string } } | null)?.subject?.reference;
const at = (iso: string, deltaMs: number) => new Date(Date.parse(iso) + deltaMs);

describe('the patient in force at the window time', () => {
  it('discharge then admission in one bed: a late window goes to the patient who was there, a new one to the new patient, one spanning the change waits', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-02');
    const m = { bedId: bed.id, monitorId: monitor.id };
    // Fills the context cache while the first patient (config/demo/hospital.json: HGH-400245) is in the bed.
    const early = await storeAssessment(gw.ctx.ds, m, windowStart(0));
    await drain(parts.worker);
    expect(subjectOf((await fhirRows([early.id]))[0]!)).toBe('Patient/patient-hgh-400245');

    const discharge = (await adminCall('POST', '/adt/discharge', { location: 'ICU-02' })) as { at: string };
    await new Promise((r) => setTimeout(r, 20));
    const admit = (await adminCall('POST', '/adt/admit', {
      location: 'ICU-02',
      patient: { mrn: 'HGH-409120', family: 'Thornquist', given: ['Ada'], sex: 'female', birthDate: '1961-04-02' },
    })) as { at: string; patientId: string };

    const before = await storeAssessment(gw.ctx.ds, m, at(discharge.at, -40_000)); // ends 10 s before the discharge
    const spanning = await storeAssessment(gw.ctx.ds, m, at(discharge.at, -10_000));
    const after = await storeAssessment(gw.ctx.ds, m, at(admit.at, 1000));
    await drain(parts.worker);
    const [b, s, n] = await Promise.all([fhirRows([before.id]), fhirRows([spanning.id]), fhirRows([after.id])]);
    expect(b.every((r) => r.status === 'delivered' && subjectOf(r) === 'Patient/patient-hgh-400245')).toBe(true);
    expect(n.every((r) => r.status === 'delivered' && subjectOf(r) === `Patient/${admit.patientId}`)).toBe(true);
    expect(n[0]!.patientName).toBe('Ada Thornquist');
    expect(n[0]!.patientMrn).toBe('HGH-409120');
    expect(s.every((r) => r.status === 'waiting-context' && r.payload === null)).toBe(true);
    expect(s[0]!.lastError).toMatch(/no encounter at ICU-02 covers/);
  });

  it('transfer between beds: the stay at each bed comes from Encounter.location periods', async () => {
    const from = await insertBedAndMonitor(gw.ctx.ds, 'ICU-03');
    const to = await insertBedAndMonitor(gw.ctx.ds, 'ICU-05');
    const warm = await storeAssessment(gw.ctx.ds, { bedId: to.bed.id, monitorId: to.monitor.id }, windowStart(1));
    await drain(parts.worker); // ICU-05 was empty: waits, and nobody is cached for it
    expect((await fhirRows([warm.id])).every((r) => r.status === 'waiting-context')).toBe(true);

    const move = (await adminCall('POST', '/adt/transfer', { from: 'ICU-03', to: 'ICU-05' })) as { at: string; patientId: string; encounterId: string };
    expect(move.patientId).toBe('patient-hgh-400388');
    const oldBedBefore = await storeAssessment(gw.ctx.ds, { bedId: from.bed.id, monitorId: from.monitor.id }, at(move.at, -31_000));
    const oldBedAfter = await storeAssessment(gw.ctx.ds, { bedId: from.bed.id, monitorId: from.monitor.id }, at(move.at, 1000));
    const newBedAfter = await storeAssessment(gw.ctx.ds, { bedId: to.bed.id, monitorId: to.monitor.id }, at(move.at, 1000));
    await drain(parts.worker);
    const ob = await fhirRows([oldBedBefore.id]);
    const oa = await fhirRows([oldBedAfter.id]);
    const na = await fhirRows([newBedAfter.id]);
    expect(ob.every((r) => r.status === 'delivered' && subjectOf(r) === 'Patient/patient-hgh-400388')).toBe(true);
    expect(oa.every((r) => r.status === 'waiting-context')).toBe(true);
    expect(
      na.every((r) => r.status === 'delivered' && subjectOf(r) === 'Patient/patient-hgh-400388' && r.encounterRef === `Encounter/${move.encounterId}`),
    ).toBe(true);
    // The window from before the patient came to ICU-05 still has nobody there.
    expect((await fhirRows([warm.id])).every((r) => r.status === 'waiting-context')).toBe(true);
  });
});

describe('amendments', () => {
  it('no Location and no body in the create answer: the amendment finds the original by identifier', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-04');
    await adminCall('PUT', '/quirks', { createLocation: 'none' });
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(2));
    try {
      await drain(parts.worker);
    } finally {
      await adminCall('PUT', '/quirks', { createLocation: 'standard' });
    }
    const created = await fhirRows([a.id]);
    expect(created.filter((r) => r.kind === 'create').every((r) => r.status === 'delivered' && r.serverId === null)).toBe(true);
    await markInError(gw.ctx.ds, a, 'reviewer-test', 'artefact: transducer flushed');
    await drain(parts.worker);
    const amends = (await fhirRows([a.id])).filter((r) => r.kind === 'amend');
    expect(amends).toHaveLength(4);
    expect(amends.every((r) => r.status === 'delivered' && r.serverId)).toBe(true);
    const token = await mockEhrToken(ehr);
    for (const r of amends) {
      const obs = (await (await fetch(`${ehr.fhirBaseUrl}/Observation/${r.serverId}`, { headers: { authorization: `Bearer ${token}` } })).json()) as {
        status: string;
        identifier: { value: string }[];
      };
      expect(obs.status).toBe('entered-in-error');
      expect(obs.identifier.some((i) => i.value === r.identifier)).toBe(true);
    }
  });

  it('an original the EHR accepted but that cannot be found: the amendment is failed (not discarded) and an alert incident opens', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-01');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(3));
    await drain(parts.worker);
    // As if the EHR's answer gave no id and the record was merged away at the EHR since.
    await gw.ctx.ds.query(
      `UPDATE delivery SET server_id = NULL, identifier = CONCAT(identifier, '-merged') WHERE assessment_id = ? AND destination_id = ? AND index_name = 'ppv'`,
      [a.id, FHIR_DESTINATION_ID],
    );
    await markInError(gw.ctx.ds, a, 'reviewer-test', 'wrong bed');
    await drain(parts.worker);
    const amend = (await fhirRows([a.id])).find((r) => r.kind === 'amend' && r.indexName === 'ppv')!;
    expect(amend.status).toBe('failed');
    expect(amend.lastError).toMatch(/cannot be found/);
    const watcher = new AlertWatcher(
      gw.ctx,
      async () => ({ recipients: ['icu-oncall@harrowmere.example'], destinationDownMinutes: 10, failureThreshold: 1000 }) as never,
    );
    await watcher.start();
    try {
      await watcher.check();
    } finally {
      await watcher.stop();
    }
    const incidents = (await gw.ctx.ds.query(`SELECT kind, open_key FROM alert_incident WHERE destination_id = ? AND kind = 'amendment'`, [
      FHIR_DESTINATION_ID,
    ])) as { kind: string; open_key: string | null }[];
    expect(incidents).toEqual([{ kind: 'amendment', open_key: `${FHIR_DESTINATION_ID}:amendment` }]);
  });
});

describe('retry and replay of a withdrawn result', () => {
  it('are refused with 409 problem details and the refused attempt is audited', async () => {
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-02');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(4));
    await drain(parts.worker);
    await markInError(gw.ctx.ds, a, 'reviewer-test', 'artefact');
    const create = (await fhirRows([a.id])).find((r) => r.kind === 'create')!;
    const operator = await gw.signIn('operator');
    for (const mode of ['replay', 'retry'] as const) {
      const res = await operator.post(`/api/v1/deliveries/${mode}`, { ids: [String(create.id)] });
      expect(res.status).toBe(409);
      expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
      expect(res.body.detail).toMatch(/entered in error/);
    }
    const adminUser = await gw.signIn('admin');
    const audit = await adminUser.get(`/api/v1/audit?action=delivery.replay.refused&entityId=${create.id}`);
    expect(audit.body.items).toHaveLength(1);
    expect((await gw.ctx.ds.getRepository(DeliveryRow).findOneBy({ id: create.id }))!.status).toBe('delivered');
  });
});

describe('HL7 v2 destination: lease renewal and fencing', () => {
  it('a pass slower than the lease is not resent by a second worker (MSH-10 counted once each)', async () => {
    await adminCall('DELETE', '/hl7');
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'OR-03');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(5));
    await adminCall('PUT', '/hl7/ack-delay', { ms: 700 }); // 4 messages ≈ 2.8 s in one pass, lease 1 s
    const ds2 = await createDataSource(gw.db.url, 4).initialize();
    try {
      const other = buildDelivery({ ...gw.ctx, ds: ds2 });
      const first = parts.worker.runOnce();
      for (let i = 0; i < 6; i++) {
        await new Promise((r) => setTimeout(r, 400));
        await other.worker.runOnce();
      }
      await first;
      await drain(parts.worker, other.worker);
    } finally {
      await adminCall('PUT', '/hl7/ack-delay', { ms: 0 });
      await ds2.destroy();
    }
    const counts = (await adminCall('GET', '/hl7/counts')) as { total: number; distinct: number; duplicated: unknown[] };
    expect(counts.duplicated).toEqual([]);
    expect(counts.total).toBe(counts.distinct);
    const ours = ((await adminCall('GET', '/hl7')) as { controlId: string }[]).filter((m) => m.controlId.includes(a.id));
    expect(ours).toHaveLength(4);
    const rows = await gw.ctx.ds.getRepository(DeliveryRow).findBy({ assessmentId: a.id, destinationId: HL7_DESTINATION_ID });
    expect(rows.every((r) => r.status === 'delivered' && r.attemptCount === 1)).toBe(true);
  });

  it('a claim that lost its rows sends nothing and changes nothing (fencing refusals counted)', async () => {
    await adminCall('DELETE', '/hl7');
    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-01');
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, windowStart(6));
    const claimed = await claimDueFenced(gw.ctx.ds, HL7_DESTINATION_ID, 500, 1);
    const stale = { ...claimed, rows: claimed.rows.filter((r) => r.assessmentId === a.id) };
    expect(stale.rows).toHaveLength(4);
    await new Promise((r) => setTimeout(r, 10));
    const fresh = await claimDueFenced(gw.ctx.ds, HL7_DESTINATION_ID, 500, 30_000);
    expect(fresh.expired).toBeGreaterThanOrEqual(4);
    const policy = async () => ({ observationStatus: 'preliminary' as const, notValidPolicy: 'data-absent' as const });
    const hl7 = new Hl7Destination(gw.ctx.ds, parts.contexts, parts.ehr, defaultCodeMap(), gw.ctx.config.delivery, policy);
    const report = await hl7.process(stale.rows);
    expect(report.fenced).toBe(stale.rows.length);
    expect(((await adminCall('GET', '/hl7')) as { controlId: string }[]).filter((m) => m.controlId.includes(a.id))).toEqual([]);
    // The fresh claim's own results are applied; a late result of the stale claim is refused.
    const late = stale.rows.map((row) => ({
      row,
      status: 'delivered' as const,
      nextAttemptAt: new Date(),
      countsAsTry: true,
      httpStatus: null,
      outcome: 'delivered',
      detail: 'late',
      response: null,
      mode: 'mllp' as const,
      durationMs: 1,
    }));
    expect(await recordAttempts(gw.ctx.ds, late)).toBe(stale.rows.length);
    const rows = await gw.ctx.ds.getRepository(DeliveryRow).findBy({ assessmentId: a.id, destinationId: HL7_DESTINATION_ID });
    expect(rows.every((r) => r.status === 'pending' && r.claimId === fresh.id)).toBe(true);
  });
});

describe('alert mail outbox', () => {
  it('a process that dies after claiming the mail leaves it due; another sends it once with a stable Message-ID', async () => {
    await adminCall('DELETE', '/mail');
    const inserted = (await gw.ctx.ds.query(
      `INSERT INTO alert_incident (destination_id, kind, open_key, opened_at, detail) VALUES (?, 'down', ?, ?, 'test: down')`,
      [HL7_DESTINATION_ID, `${HL7_DESTINATION_ID}:down-test`, new Date()],
    )) as { insertId: number | string };
    const incidentId = String(inserted.insertId);
    const settings = async () => ({ recipients: ['icu-oncall@harrowmere.example'], destinationDownMinutes: 10_000, failureThreshold: 100_000 }) as never;
    // The first process claims, then "dies" inside send (never returns).
    const dying: Mailer = { send: () => new Promise<void>(() => {}), close: () => {} };
    const first = new AlertWatcher(gw.ctx, settings, () => dying);
    await first.start();
    void first.check();
    const claimed = await waitFor(
      'the mail claimed',
      async () => (await gw.ctx.ds.getRepository(AlertMailRow).findOneBy({ incidentId, event: 'opened' })) ?? undefined,
      5000,
    );
    await waitFor('claimed by the first', async () => !!(await gw.ctx.ds.getRepository(AlertMailRow).findOneBy({ id: claimed.id }))?.claimId, 5000);
    expect((await adminCall('GET', '/mail')) as unknown[]).toHaveLength(0);
    void first.stop(); // its send never returns: the process is gone
    // Its lease runs out (set back rather than waited for), and a second process sends it.
    await gw.ctx.ds.query(`UPDATE alert_mail SET claimed_until = ? WHERE id = ?`, [new Date(Date.now() - 1000), claimed.id]);
    const second = new AlertWatcher(gw.ctx, settings);
    await second.start();
    try {
      await second.check();
      await second.check();
    } finally {
      await second.stop();
    }
    // The catcher parses mail asynchronously: wait until it holds ours, then make sure it is one.
    const mailOf = async () =>
      ((await adminCall('GET', '/mail')) as { subject: string; messageId: string; text: string }[]).filter((x) => x.messageId === claimed.messageId);
    const state = await gw.ctx.ds.getRepository(AlertMailRow).findOneBy({ id: claimed.id });
    expect(state?.lastError ?? null).toBeNull();
    expect(state?.status).toBe('sent');
    await waitFor('the mail at the catcher', async () => (await mailOf()).length > 0, 10_000);
    await new Promise((r) => setTimeout(r, 300));
    const ours = await mailOf();
    expect(ours).toHaveLength(1);
    expect(claimed.messageId).toMatch(/^<ebbgate-incident-\d+-opened@[^>]+>$/);
    expect(ours[0]!.text).toContain('Open the Deliveries screen');
    expect(ours[0]!.text).toContain('http://console.harrowmere.example/deliveries');
    expect((await gw.ctx.ds.getRepository(AlertMailRow).findOneBy({ id: claimed.id }))!.status).toBe('sent');
  });

  it('a second stream claiming a monitor (kept as conflicting) opens a device-edge incident and mails the on-call list, pointing at the inbound screen', async () => {
    await adminCall('DELETE', '/mail');
    const settings = async () => ({ recipients: ['icu-oncall@harrowmere.example'], destinationDownMinutes: 10_000, failureThreshold: 100_000 }) as never;
    const watcher = new AlertWatcher(gw.ctx, settings);
    await watcher.start();
    try {
      await watcher.check();
      expect(await gw.ctx.ds.query(`SELECT id FROM alert_incident WHERE open_key = ?`, [`${EDGE_SOURCE.id}:conflicting`])).toHaveLength(0);
      await recordInbound(gw.ctx.ds, {
        transport: 'mllp',
        receivedAt: new Date(),
        outcome: 'conflicting',
        reason: 'a second stream for monitor 02EB6AFFFE000001 overlaps the stream of another sender',
        raw: Buffer.from('MSH|^~\\&|...'),
        monitorIdentifier: '02EB6AFFFE000001',
        sender: 'source 127.0.0.9',
        sourceAddress: '127.0.0.9',
      });
      await watcher.check();
      const open = (await gw.ctx.ds.query(`SELECT id, kind, destination_id AS source FROM alert_incident WHERE open_key = ?`, [
        `${EDGE_SOURCE.id}:conflicting`,
      ])) as { id: string; kind: string; source: string }[];
      expect(open).toHaveLength(1);
      expect(open[0]!.source).toBe(EDGE_SOURCE.id);
      const mailOf = async () => ((await adminCall('GET', '/mail')) as { subject: string; text: string }[]).filter((x) => x.subject.includes('second stream'));
      await waitFor('the edge alert at the catcher', async () => ((await mailOf()).length ? true : undefined), 10_000);
      const [mail] = await mailOf();
      expect(mail!.subject).toBe('[Ebbgate] Device edge refused a second stream claiming a monitor');
      expect(mail!.text).toContain('/inbound?outcome=conflicting');
      // Once another check still sees the message inside the window, the incident stays one incident.
      await watcher.check();
      expect(await gw.ctx.ds.query(`SELECT id FROM alert_incident WHERE kind = 'conflicting'`)).toHaveLength(1);
    } finally {
      await watcher.stop();
    }
  });
});
