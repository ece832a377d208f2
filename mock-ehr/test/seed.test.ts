import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadHospitalFile, LOCATION_SYSTEM, MRN_SYSTEM, type RunningMockEhr } from '../src/index.js';
import { validateAgainstSchema } from '../src/fhir/schema-validator.js';
import { fhir, startTestEhrWithToken } from './helpers.js';

// The demo hospital (config/demo/hospital.json) seeded as FHIR resources. Every seeded resource is
// checked against the FHIR R4 JSON schema; Encounter.class uses v3 ActCode IMP (FHIR R4 value set
// "ActEncounterCode"), bed Locations physicalType "bd" (location-physical-type).

let ehr: RunningMockEhr;
let token: string;
beforeAll(async () => ({ ehr, token } = await startTestEhrWithToken()));
afterAll(() => ehr?.stop());

describe('demo hospital seed', () => {
  const file = loadHospitalFile();

  it('has an ICU and a theatre suite, about eight beds, and one bed without a patient', () => {
    expect(file.units.map((u) => u.code)).toEqual(['ICU', 'THEATRES']);
    expect(file.beds.length).toBeGreaterThanOrEqual(8);
    expect(file.beds.filter((b) => !b.patient)).toHaveLength(1);
  });

  it('seeds every resource valid against the FHIR R4 JSON schema', async () => {
    for (const type of ['Location', 'Patient', 'Encounter']) {
      const all = await fhir(ehr, token, 'GET', `${type}?_count=100`);
      expect(all.body.total).toBeGreaterThan(0);
      for (const e of all.body.entry) expect(validateAgainstSchema(e.resource)).toEqual([]);
    }
  });

  it('links each occupied bed to its patient through an in-progress Encounter', async () => {
    for (const bed of file.beds) {
      const loc = await fhir(ehr, token, 'GET', `Location?identifier=${LOCATION_SYSTEM}|${bed.locationIdentifier}`);
      expect(loc.body.total).toBe(1);
      const enc = await fhir(ehr, token, 'GET', `Encounter?location=${loc.body.entry[0].resource.id}&status=in-progress`);
      if (!bed.patient) {
        expect(enc.body.total).toBe(0);
        continue;
      }
      expect(enc.body.total).toBe(1);
      expect(enc.body.entry[0].resource.id).toBe(bed.encounterId);
      const pat = await fhir(ehr, token, 'GET', enc.body.entry[0].resource.subject.reference);
      expect(pat.body.identifier[0]).toMatchObject({ system: MRN_SYSTEM, value: bed.patient.mrn });
      expect(pat.body.name[0].family).toBe(bed.patient.family);
    }
  });

  it('reset puts the store back to the seed', async () => {
    await fhir(ehr, token, 'PUT', 'Location/icu-01', { resourceType: 'Location', id: 'icu-01', name: 'changed' });
    await fetch(`${ehr.baseUrl}/_admin/reset`, { method: 'POST' });
    const loc = await fhir(ehr, token, 'GET', 'Location/icu-01');
    expect(loc.body.name).toBe('ICU bed 1');
    expect(loc.body.meta.versionId).toBe('1');
  });
});
