import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';

// The demo hospital file (config/demo/hospital.json). The gateway reads the same file to seed its
// beds, so this schema is the contract; see mock-ehr/README.md.

const fhirId = z.string().regex(/^[A-Za-z0-9\-.]{1,64}$/, 'a FHIR id: letters, digits, - and ., at most 64');

export const hospitalPatientSchema = z.object({
  mrn: z.string().min(1),
  family: z.string().min(1),
  given: z.array(z.string().min(1)).min(1),
  sex: z.enum(['female', 'male', 'other', 'unknown']),
  birthDate: z.string().regex(/^\d{4}-\d{2}-\d{2}$/),
  heightCm: z.number().positive().max(260),
});

export const hospitalBedSchema = z.object({
  id: fhirId,
  name: z.string().min(1),
  unit: z.string().min(1),
  locationIdentifier: z.string().min(1),
  patient: hospitalPatientSchema.optional(),
  encounterId: fhirId.optional(),
});

export const hospitalFileSchema = z
  .object({
    hospital: z.object({
      name: z.string().min(1),
      description: z.string().optional(),
      identifier: z.object({ system: z.string().min(1), value: z.string().min(1) }),
    }),
    units: z.array(z.object({ code: fhirId, name: z.string().min(1) })).default([]),
    beds: z.array(hospitalBedSchema).min(1),
  })
  .superRefine((file, ctx) => {
    const units = new Set(file.units.map((u) => u.code));
    file.beds.forEach((bed, i) => {
      if (units.size > 0 && !units.has(bed.unit))
        ctx.addIssue({ code: 'custom', path: ['beds', i, 'unit'], message: `unit ${bed.unit} is not listed in units` });
      if (!!bed.patient !== !!bed.encounterId)
        ctx.addIssue({ code: 'custom', path: ['beds', i], message: 'patient and encounterId come together (a bed with a patient has an encounter)' });
    });
  });

export type HospitalFile = z.infer<typeof hospitalFileSchema>;
export type HospitalBed = z.infer<typeof hospitalBedSchema>;

/** Identifier systems the demo data uses. */
export const LOCATION_SYSTEM = 'urn:ebbgate:demo:location';
export const MRN_SYSTEM = 'urn:ebbgate:demo:mrn';

export const DEFAULT_HOSPITAL_FILE = fileURLToPath(new URL('../../../config/demo/hospital.json', import.meta.url));

export function loadHospitalFile(path = DEFAULT_HOSPITAL_FILE): HospitalFile {
  const parsed = hospitalFileSchema.safeParse(JSON.parse(readFileSync(path, 'utf8')));
  if (!parsed.success) throw new Error(`${path} is not a valid hospital file: ${z.prettifyError(parsed.error)}`);
  return parsed.data;
}
