// The resource types this mock EHR stores; anything else is answered 404 (not-supported).
export const SUPPORTED_TYPES = ['Patient', 'Encounter', 'Location', 'Device', 'Observation'] as const;
export type SupportedType = (typeof SUPPORTED_TYPES)[number];

export function isSupportedType(t: string): t is SupportedType {
  return (SUPPORTED_TYPES as readonly string[]).includes(t);
}

/** A stored FHIR resource; only the fields the server itself touches are typed. */
export interface FhirResource {
  resourceType: string;
  id?: string;
  meta?: { versionId?: string; lastUpdated?: string; [k: string]: unknown };
  [k: string]: unknown;
}

/** FHIR R4 id datatype: [A-Za-z0-9\-\.]{1,64}. */
export const FHIR_ID = /^[A-Za-z0-9\-.]{1,64}$/;
