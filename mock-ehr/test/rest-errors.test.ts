import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { admin, fhir, observation, startTestEhrWithToken } from './helpers.js';

// Reference: FHIR R4 RESTful API, "HTTP status codes": 404 unknown resource type or id, 405 an
// interaction the server does not support, 415 an unsupported content type; every error body an
// OperationOutcome with issue.severity and issue.code.

let ehr: RunningMockEhr;
let token: string;
beforeAll(async () => ({ ehr, token } = await startTestEhrWithToken()));
afterAll(() => ehr?.stop());

const expectOutcome = (body: { resourceType: string; issue: { severity: string; code: string }[] }) => {
  expect(body.resourceType).toBe('OperationOutcome');
  expect(body.issue[0]!.severity).toBe('error');
  expect(typeof body.issue[0]!.code).toBe('string');
};

describe('REST error answers', () => {
  it('404 for an unknown id and for an unsupported resource type', async () => {
    const a = await fhir(ehr, token, 'GET', 'Observation/does-not-exist');
    expect(a.status).toBe(404);
    expectOutcome(a.body);
    const b = await fhir(ehr, token, 'GET', 'MedicationRequest');
    expect(b.status).toBe(404);
    expect(b.body.issue[0].code).toBe('not-supported');
  });

  it('405 for DELETE, which the mock does not implement', async () => {
    const a = await fhir(ehr, token, 'DELETE', 'Observation/x');
    expect(a.status).toBe(405);
    expectOutcome(a.body);
  });

  it('415 for a body that is not JSON by its content type', async () => {
    const a = await fhir(ehr, token, 'POST', 'Observation', JSON.stringify(observation('e-1')), { 'content-type': 'text/plain' });
    expect(a.status).toBe(415);
    expectOutcome(a.body);
  });

  it('a fault scoped to the token endpoint answers with an OAuth error body (RFC 6749 §5.2 shape)', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ scope: 'token', errorRate: 1, statusCodes: [503], retryAfterSeconds: 2, remaining: 1 }] });
    const res = await fetch(ehr.tokenUrl, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: 'grant_type=client_credentials',
    });
    expect(res.status).toBe(503);
    expect(res.headers.get('retry-after')).toBe('2');
    expect(((await res.json()) as { error: string }).error).toBe('temporarily_unavailable');
    expect((await fhir(ehr, token, 'GET', 'Patient')).status).toBe(200); // FHIR calls untouched
  });
});
