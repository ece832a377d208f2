import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { validateAgainstSchema } from '../src/fhir/schema-validator.js';
import { startTestEhr } from './helpers.js';

// Reference: FHIR R4 CapabilityStatement (GET [base]/metadata, fhirVersion 4.0.1), checked against
// the FHIR R4 JSON schema; SMART App Launch "oauth-uris" extension and .well-known/smart-configuration
// for where the token endpoint is.

let ehr: RunningMockEhr;
beforeAll(async () => {
  ehr = await startTestEhr();
});
afterAll(() => ehr.stop());

describe('metadata', () => {
  it('serves a schema-valid R4 CapabilityStatement listing the five resource types and the token URL', async () => {
    const res = await fetch(`${ehr.fhirBaseUrl}/metadata`);
    expect(res.headers.get('content-type')).toMatch(/application\/fhir\+json/);
    const cs = (await res.json()) as { resourceType: string; fhirVersion: string; rest: { resource: { type: string }[]; security: unknown }[] };
    expect(validateAgainstSchema(cs)).toEqual([]);
    expect(cs.fhirVersion).toBe('4.0.1');
    expect(cs.rest[0]!.resource.map((r) => r.type)).toEqual(['Patient', 'Encounter', 'Location', 'Device', 'Observation']);
    expect(JSON.stringify(cs.rest[0]!.security)).toContain(ehr.tokenUrl);
  });

  it('names the token endpoint in .well-known/smart-configuration', async () => {
    const conf = (await (await fetch(`${ehr.fhirBaseUrl}/.well-known/smart-configuration`)).json()) as { token_endpoint: string };
    expect(conf.token_endpoint).toBe(ehr.tokenUrl);
  });
});
