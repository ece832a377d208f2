import { SUPPORTED_TYPES } from './resource-types.js';
import { SEARCH_PARAMS } from './search-params.js';

/** The CapabilityStatement served at /fhir/metadata (FHIR R4 4.0.1), generated from what the server implements. */
export function capabilityStatement(fhirBase: string, tokenUrl: string): Record<string, unknown> {
  return {
    resourceType: 'CapabilityStatement',
    status: 'active',
    date: '2026-12-01',
    publisher: 'Ebbgate',
    kind: 'instance',
    software: { name: 'Ebbgate mock EHR', version: '0.1.0' },
    implementation: { description: 'Ebbgate mock EHR (in-memory, for development and tests only)', url: fhirBase },
    fhirVersion: '4.0.1',
    format: ['application/fhir+json', 'json'],
    rest: [
      {
        mode: 'server',
        security: {
          service: [{ coding: [{ system: 'http://terminology.hl7.org/CodeSystem/restful-security-service', code: 'SMART-on-FHIR' }] }],
          extension: [
            {
              url: 'http://fhir-registry.smarthealthit.org/StructureDefinition/oauth-uris',
              extension: [{ url: 'token', valueUri: tokenUrl }],
            },
          ],
        },
        resource: SUPPORTED_TYPES.map((type) => ({
          type,
          interaction: ['read', 'vread', 'update', 'create', 'search-type'].map((code) => ({ code })),
          versioning: 'versioned',
          updateCreate: true,
          conditionalCreate: true,
          conditionalUpdate: true,
          searchParam: Object.entries(SEARCH_PARAMS[type] ?? {}).map(([name, def]) => ({ name, type: def.kind })),
        })),
        interaction: [{ code: 'transaction' }, { code: 'batch' }],
      },
    ],
  };
}
