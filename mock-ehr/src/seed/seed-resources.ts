import type { FhirResource } from '../fhir/resource-types.js';
import { LOCATION_SYSTEM, MRN_SYSTEM, type HospitalFile } from './hospital-file.js';

// Turns the hospital file into FHIR R4 resources: a Location per unit and per bed (partOf the unit),
// and for each occupied bed a Patient and an in-progress Encounter at that bed.

const PHYSICAL_TYPE = 'http://terminology.hl7.org/CodeSystem/location-physical-type';

export function patientIdFor(mrn: string): string {
  return `patient-${mrn.toLowerCase().replace(/[^a-z0-9\-.]/g, '-')}`.slice(0, 64);
}

/** A Patient with its MRN (identifier type MR, HL7 v2 table 0203), as seeded and as an admission makes one. */
export function patientResource(p: { mrn: string; family: string; given: string[]; sex: string; birthDate: string }): FhirResource & { id: string } {
  return {
    resourceType: 'Patient',
    id: patientIdFor(p.mrn),
    active: true,
    identifier: [
      {
        use: 'usual',
        type: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/v2-0203', code: 'MR', display: 'Medical record number' }] },
        system: MRN_SYSTEM,
        value: p.mrn,
      },
    ],
    name: [{ use: 'official', family: p.family, given: p.given }],
    gender: p.sex,
    birthDate: p.birthDate,
  };
}

export function seedResources(file: HospitalFile, now = new Date()): FhirResource[] {
  const out: FhirResource[] = [];
  for (const unit of file.units) {
    out.push({
      resourceType: 'Location',
      id: `unit-${unit.code.toLowerCase()}`,
      status: 'active',
      mode: 'instance',
      name: unit.name,
      identifier: [{ system: LOCATION_SYSTEM, value: unit.code }],
      physicalType: { coding: [{ system: PHYSICAL_TYPE, code: 'wa', display: 'Ward' }] },
      description: file.hospital.name,
    });
  }
  const hasUnits = new Set(file.units.map((u) => u.code));
  // Encounters started a few hours before the mock came up, so "in progress" reads naturally.
  const started = new Date(now.getTime() - 3 * 3600_000).toISOString();
  for (const bed of file.beds) {
    out.push({
      resourceType: 'Location',
      id: bed.id,
      status: 'active',
      mode: 'instance',
      name: bed.name,
      identifier: [{ system: LOCATION_SYSTEM, value: bed.locationIdentifier }],
      physicalType: { coding: [{ system: PHYSICAL_TYPE, code: 'bd', display: 'Bed' }] },
      ...(hasUnits.has(bed.unit) ? { partOf: { reference: `Location/unit-${bed.unit.toLowerCase()}` } } : {}),
    });
    if (!bed.patient || !bed.encounterId) continue;
    const p = bed.patient;
    const patientId = patientIdFor(p.mrn);
    out.push(patientResource(p));
    out.push({
      resourceType: 'Encounter',
      id: bed.encounterId,
      status: 'in-progress',
      class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP', display: 'inpatient encounter' },
      subject: { reference: `Patient/${patientId}` },
      period: { start: started },
      location: [{ location: { reference: `Location/${bed.id}`, display: bed.name }, status: 'active', period: { start: started } }],
    });
  }
  return out;
}
