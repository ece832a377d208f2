/**
 * The tidal volume challenge result travels to the EHR as one more Observation: real gateway,
 * real MariaDB, real outbox worker, the mock EHR. Truth comes from the synthetic generator
 * (generateChallenge); the resource is checked against the FHIR R4 JSON schema, the R4
 * Observation invariants and UCUM by the independent checks in tests/src/delivery/fhir-conformance.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '@ebbgate/mock-ehr';
import { analyseTidalVolumeChallenge } from '@ebbgate/shared/analysis';
import { generateChallenge } from '@ebbgate/shared/synthetic';
import { failedInvariants, r4SchemaErrors, ucumStatus } from '../../../tests/src/delivery/fhir-conformance';
import { CHALLENGE_DELIVERY } from '../../src/analysis/challenge-observation';
import { defaultCodeMap } from '../../src/delivery/code-map';
import { DeliveryRow } from '../../src/delivery/delivery.entities';
import type { Observation } from '../../src/delivery/fhir-types';
import { buildOru } from '../../src/delivery/oru-message';
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
  stack = await startDeliveryStack(() => QUICK_DELIVERY, { services: true });
  ({ ehr, gw, admin } = stack);
}, 60_000);

afterAll(async () => stack?.stop());

async function readObservation(serverId: string): Promise<Observation> {
  const res = await fetch(`${ehr.fhirBaseUrl}/Observation/${serverId}`, { headers: { authorization: `Bearer ${await mockEhrToken(ehr)}` } });
  expect(res.status).toBe(200);
  return (await res.json()) as Observation;
}

const rowsOf = (id: string) => gw.ctx.ds.getRepository(DeliveryRow).findBy({ assessmentId: id });

/** A responder's challenge as the engine judges it on the generator's two segments (6 → 8 mL/kg PBW). */
function judgedResponder() {
  const g = generateChallenge({ seed: 431, kind: 'responder' });
  const t = analyseTidalVolumeChallenge({ segments: g.segments.map((s) => ({ channels: s.channels, context: s.context })) }).tidalVolumeChallenge;
  return { g, t };
}

describe('tidal volume challenge delivered to the FHIR destination', () => {
  it('an assessment carrying a challenge result gets its challenge Observation once, with code, ΔPPV in %, subject; R4-valid; replay and mark-in-error keep it exactly once', async () => {
    const { g, t } = judgedResponder();
    // The engine agrees with the generator's truth first (else the test says nothing about delivery).
    expect(t.verdict).toBe(g.truth.expected);
    expect(t.deltaPpv).not.toBeNull();
    expect(g.truth.deltaPpv).not.toBeNull();
    expect(Math.abs((t.deltaPpv as number) - (g.truth.deltaPpv as number))).toBeLessThanOrEqual(1.5);

    const { bed, monitor } = await insertBedAndMonitor(gw.ctx.ds, 'ICU-01');
    const start = windowStart(2);
    const stepAt = new Date(start.getTime() - 30_000);
    const a = await storeAssessment(gw.ctx.ds, { bedId: bed.id, monitorId: monitor.id }, start, undefined, true, {
      tidalVolumeChallenge: t as unknown as object,
      challengeDeltaPpv: t.deltaPpv,
      challengeVerdict: t.verdict,
      challengeStepAt: stepAt,
    });
    const rows = await waitFor('all delivered', async () => {
      const r = await rowsOf(a.id);
      return r.length === 5 && r.every((x) => ['delivered', 'withheld'].includes(x.status)) ? r : undefined;
    });
    const challengeRow = rows.find((r) => r.indexName === CHALLENGE_DELIVERY);
    expect(challengeRow).toBeDefined();
    expect(challengeRow!.status).toBe('delivered');
    expect(challengeRow!.identifier).toBe(`${a.id}-tidal-volume-challenge`);
    expect(challengeRow!.serverId).toBeTruthy();

    // Exactly once at the EHR by identifier, beside the four indices.
    const counts = await admin.observations();
    expect(counts.byIdentifier[IDENT + challengeRow!.identifier]).toBe(1);
    for (const r of rows.filter((x) => x.status === 'delivered')) expect(counts.byIdentifier[IDENT + r.identifier]).toBe(1);

    const obs = await readObservation(challengeRow!.serverId!);
    expect(obs.code.coding).toEqual([{ system: 'urn:ebbgate:codes', code: 'tidal-volume-challenge', display: expect.any(String) }]);
    expect(obs.valueQuantity).toBeDefined();
    expect(obs.valueQuantity!.system).toBe('http://unitsofmeasure.org');
    expect(obs.valueQuantity!.code).toBe('%');
    // The value is the engine's ΔPPV (points) to the builder's four decimals, near the generator's truth.
    expect(obs.valueQuantity!.value).toBeCloseTo(t.deltaPpv as number, 3);
    expect(Math.abs((obs.valueQuantity!.value as number) - (g.truth.deltaPpv as number))).toBeLessThanOrEqual(1.5);
    expect(obs.interpretation![0]!.coding![0]!.code).toBe(g.truth.expected === 'positive' ? 'tvc-positive' : 'tvc-negative');
    // config/demo/hospital.json: ICU-01 holds MRN HGH-400117 in encounter enc-icu-01.
    expect(obs.subject!.reference).toBe('Patient/patient-hgh-400117');
    expect(obs.encounter!.reference).toBe('Encounter/enc-icu-01');
    expect(obs.effectivePeriod.start).toBe(stepAt.toISOString());
    // Tidal volumes as components: the generator's 6 and 8 mL/kg PBW.
    const vt = (code: string) => obs.component!.find((c) => c.code.coding![0]!.code === code)?.valueQuantity?.value;
    expect(vt('tvc-tidal-volume-low')).toBe(g.truth.baselineTidalVolumeMl);
    expect(vt('tvc-tidal-volume-high')).toBe(g.truth.challengeTidalVolumeMl);

    // FHIR R4 JSON schema (ajv), obs-6/obs-7 (fhirpath), UCUM (ucum-lhc).
    expect(r4SchemaErrors(obs)).toEqual([]);
    expect(failedInvariants(obs)).toEqual([]);
    expect(ucumStatus(obs.valueQuantity!.code!)).toBe('valid');

    // A replay of the create (say, a crash after the send) stays one Observation by identifier.
    await gw.ctx.ds.getRepository(DeliveryRow).update({ id: challengeRow!.id }, { status: 'pending', nextAttemptAt: new Date(), claimId: null });
    await waitFor('replayed create delivered', async () =>
      (await gw.ctx.ds.getRepository(DeliveryRow).findOneBy({ id: challengeRow!.id }))?.status === 'delivered' ? true : undefined,
    );
    expect((await admin.observations()).byIdentifier[IDENT + challengeRow!.identifier]).toBe(1);

    // Mark in error: the challenge Observation is amended like the others.
    await markInError(gw.ctx.ds, a, 'reviewer', 'challenge done on the wrong monitor');
    const amend = await waitFor('challenge amendment delivered', async () => {
      const r = (await rowsOf(a.id)).find((x) => x.kind === 'amend' && x.indexName === CHALLENGE_DELIVERY);
      return r?.status === 'delivered' ? r : undefined;
    });
    expect(amend.identifier).toBe(challengeRow!.identifier);
    const amended = await readObservation(challengeRow!.serverId!);
    expect(amended.status).toBe('entered-in-error');
    expect(amended.identifier[0]!.value).toBe(challengeRow!.identifier);
    expect(r4SchemaErrors(amended)).toEqual([]);
    const after = await admin.observations();
    expect(after.byIdentifier[IDENT + challengeRow!.identifier]).toBe(1);
    expect(after.duplicated).toEqual([]);
  }, 60_000);

  it('the same Observation goes into an HL7 v2 ORU^R01 OBX under the local code (99EBG), value in UCUM %', async () => {
    const { t } = judgedResponder();
    const rows = await gw.ctx.ds.getRepository(DeliveryRow).findBy({ indexName: CHALLENGE_DELIVERY, kind: 'create' });
    expect(rows.length).toBeGreaterThan(0);
    const obs = rows[0]!.payload as Observation;
    const msg = buildOru(defaultCodeMap(), {
      observation: obs,
      controlId: 'c1',
      mrn: 'HGH-400117',
      locationIdentifier: 'ICU-01',
      sendingFacility: 'HGH',
      receivingApplication: 'EHR',
      monitorIdentifier: null,
      at: new Date(),
    });
    const obx = msg
      .split('\r')
      .find((s) => s.startsWith('OBX|'))!
      .split('|');
    // HL7 v2.6 OBX-3 observation identifier, OBX-5 value, OBX-6 units (code^text^UCUM).
    expect(obx[3]).toMatch(/^tidal-volume-challenge\^.+\^99EBG$/);
    expect(Number(obx[5])).toBeCloseTo(t.deltaPpv as number, 3);
    expect(obx[6]).toBe('%^percentage points^UCUM');
  });
});
