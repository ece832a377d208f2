import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { admin, fhir, observation, startTestEhrWithToken } from './helpers.js';

// Fault injection through /_admin/faults. References: RFC 9110 §10.2.3 (Retry-After on 429/503),
// RFC 6585 §4 (429 Too Many Requests); the rest is the mock's own documented contract.

let ehr: RunningMockEhr;
let token: string;
beforeAll(async () => ({ ehr, token } = await startTestEhrWithToken()));
afterAll(() => ehr?.stop());
beforeEach(async () => {
  await admin(ehr, 'DELETE', 'faults');
});

const statuses = async (n: number, path = 'Patient') => {
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push((await fhir(ehr, token, 'GET', path)).status);
  return out;
};

describe('fault injection', () => {
  it('fails exactly the configured fraction, evenly spread, with the chosen status codes', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ errorRate: 0.5, statusCodes: [500, 503] }] });
    expect(await statuses(6)).toEqual([200, 500, 200, 503, 200, 500]);
    const view = await admin(ehr, 'GET', 'faults');
    expect(view.body.rules[0]).toMatchObject({ seen: 6, injected: 3 });
  });

  it('answers 429 with Retry-After and an OperationOutcome (throttled)', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ errorRate: 1, statusCodes: [429], retryAfterSeconds: 7, remaining: 1 }] });
    const a = await fhir(ehr, token, 'POST', 'Observation', observation('f-1'));
    expect(a.status).toBe(429);
    expect(a.headers.get('retry-after')).toBe('7');
    expect(a.body.issue[0].code).toBe('throttled');
    // remaining: 1 → the rule removed itself after one fault
    expect((await fhir(ehr, token, 'POST', 'Observation', observation('f-1'))).status).toBe(201);
  });

  it('scopes a rule to one resource type', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ scope: 'Observation', errorRate: 1, statusCodes: [503] }] });
    expect((await fhir(ehr, token, 'GET', 'Observation')).status).toBe(503);
    expect((await fhir(ehr, token, 'GET', 'Patient')).status).toBe(200);
    const bundle = { resourceType: 'Bundle', type: 'transaction', entry: [{ resource: observation('f-2'), request: { method: 'POST', url: 'Observation' } }] };
    expect((await fhir(ehr, token, 'POST', '', bundle)).status).toBe(503);
  });

  it('can answer 401 to make a client fetch a new token', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ errorRate: 1, statusCodes: [401], remaining: 1 }] });
    const a = await fhir(ehr, token, 'GET', 'Patient');
    expect(a.status).toBe(401);
    expect(a.headers.get('www-authenticate')).toMatch(/^Bearer/);
  });

  it('adds latency', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ latencyMs: 150 }] });
    const t0 = performance.now();
    expect((await fhir(ehr, token, 'GET', 'Patient')).status).toBe(200);
    expect(performance.now() - t0).toBeGreaterThanOrEqual(145);
  });

  it('hangs (no answer until the client gives up) and logs the request as unanswered', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ timeoutRate: 1, remaining: 1 }] });
    const hung = fetch(`${ehr.fhirBaseUrl}/Patient`, { headers: { authorization: `Bearer ${token}` }, signal: AbortSignal.timeout(300) });
    await expect(hung).rejects.toThrow();
    await new Promise((r) => setTimeout(r, 50));
    const log = await admin(ehr, 'GET', 'requests?limit=5');
    expect(log.body.at(-1)).toMatchObject({ path: '/fhir/Patient', status: null, unanswered: true, fault: 'hang' });
  });

  it('drops the connection when down', async () => {
    await admin(ehr, 'PUT', 'faults', { rules: [{ down: true }] });
    await expect(fetch(`${ehr.fhirBaseUrl}/Patient`, { headers: { authorization: `Bearer ${token}` } })).rejects.toThrow();
    await admin(ehr, 'DELETE', 'faults');
    expect((await fhir(ehr, token, 'GET', 'Patient')).status).toBe(200);
  });

  it('refuses connections during an outage and comes back on the same port', async () => {
    expect((await admin(ehr, 'POST', 'outage', { durationMs: 400 })).status).toBe(202);
    await new Promise((r) => setTimeout(r, 100));
    const refused = await fetch(`${ehr.fhirBaseUrl}/metadata`).catch((e: Error & { cause?: { code?: string } }) => e.cause?.code);
    expect(refused).toBe('ECONNREFUSED');
    await new Promise((r) => setTimeout(r, 600));
    expect((await fetch(`${ehr.fhirBaseUrl}/metadata`)).status).toBe(200);
  });

  it('rejects an invalid fault body with problem details', async () => {
    const a = await admin(ehr, 'PUT', 'faults', { rules: [{ errorRate: 2 }] });
    expect(a.status).toBe(400);
    expect(a.headers.get('content-type')).toMatch(/application\/problem\+json/);
    expect(a.body).toMatchObject({ status: 400, title: 'Invalid request body' });
  });
});
