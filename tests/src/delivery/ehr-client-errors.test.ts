/**
 * HTTP error paths of the gateway's EHR client, with nock (14.x) standing in for the EHR.
 * Expected classifications follow FHIR R4 http.html (conditional create: 201 new, 200 existing,
 * 412 several matches; OperationOutcome on errors) and RFC 9110 (Retry-After; 408/429/5xx transient).
 */
import nock from 'nock';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { EhrClient } from '@ebbgate/gateway/delivery/ehr-client';
import type { Observation } from '@ebbgate/gateway/delivery/fhir-types';

const BASE = 'http://ehr.test:8080';
const settings = { fhirBaseUrl: `${BASE}/fhir`, tokenUrl: `${BASE}/oauth/token`, clientId: 'ebbgate-gateway', clientSecret: 's3cret', requestTimeoutMs: 300 };
const obs = {
  resourceType: 'Observation',
  status: 'preliminary',
  code: { text: 'PPV' },
  identifier: [{ system: 'urn:ebbgate:observation', value: 'a-ppv' }],
} as unknown as Observation;
const outcome = (code: string, diagnostics: string) => ({ resourceType: 'OperationOutcome', issue: [{ severity: 'error', code, diagnostics }] });

function token(times = 1, value = 'tok-1') {
  return nock(BASE)
    .post('/oauth/token', (body) => body.grant_type === 'client_credentials' && body.client_id === 'ebbgate-gateway' && body.client_secret === 's3cret')
    .times(times)
    .reply(200, { access_token: value, token_type: 'Bearer', expires_in: 300 });
}

beforeAll(() => nock.disableNetConnect());
afterEach(() => nock.cleanAll());
afterAll(() => nock.enableNetConnect());

describe('EHR client error paths (nock)', () => {
  it('conditional create sends If-None-Exist and the bearer token; 201 is a new resource', async () => {
    token();
    const scope = nock(BASE, { reqheaders: { authorization: 'Bearer tok-1', 'if-none-exist': 'identifier=urn%3Aebbgate%3Aobservation%7Ca-ppv' } })
      .post('/fhir/Observation')
      .reply(201, { ...obs, id: 'o1' });
    const r = await new EhrClient(settings).createObservation(obs, 'identifier=urn%3Aebbgate%3Aobservation%7Ca-ppv');
    expect(r).toMatchObject({ kind: 'delivered', httpStatus: 201, serverId: 'o1', created: true });
    expect(scope.isDone()).toBe(true);
  });

  it('200 on conditional create (already there) is delivered, not created', async () => {
    token();
    nock(BASE)
      .post('/fhir/Observation')
      .reply(200, { ...obs, id: 'o1' });
    expect(await new EhrClient(settings).createObservation(obs, 'identifier=x')).toMatchObject({ kind: 'delivered', httpStatus: 200, created: false });
  });

  it.each([400, 404, 412, 422])('%i is rejected at once with the OperationOutcome kept', async (status) => {
    token();
    nock(BASE).post('/fhir/Observation').reply(status, outcome('invalid', 'Observation.code: required'));
    const r = await new EhrClient(settings).createObservation(obs, 'identifier=x');
    expect(r.kind).toBe('rejected');
    expect(r.httpStatus).toBe(status);
    expect(r.response).toEqual(outcome('invalid', 'Observation.code: required'));
  });

  it.each([408, 429, 500, 502, 503, 504])('%i is retryable and Retry-After is read', async (status) => {
    token();
    nock(BASE).post('/fhir/Observation').reply(status, outcome('transient', 'busy'), { 'Retry-After': '7' });
    const r = await new EhrClient(settings).createObservation(obs, 'identifier=x');
    expect(r).toMatchObject({ kind: 'retryable', httpStatus: status, retryAfterMs: 7000 });
  });

  it('401 renews the token once and repeats the call', async () => {
    token(1, 'old');
    token(1, 'new');
    nock(BASE, { reqheaders: { authorization: 'Bearer old' } })
      .post('/fhir/Observation')
      .reply(401, outcome('login', 'expired'));
    nock(BASE, { reqheaders: { authorization: 'Bearer new' } })
      .post('/fhir/Observation')
      .reply(201, { ...obs, id: 'o2' });
    expect(await new EhrClient(settings).createObservation(obs, 'identifier=x')).toMatchObject({ kind: 'delivered', serverId: 'o2' });
  });

  it('401 twice and 403 are configuration errors (auth), not message errors', async () => {
    token(2);
    nock(BASE).post('/fhir/Observation').times(2).reply(401, outcome('login', 'bad token'));
    expect((await new EhrClient(settings).createObservation(obs, 'identifier=x')).kind).toBe('auth');
    token();
    nock(BASE).post('/fhir/Observation').reply(403, outcome('forbidden', 'scope'));
    expect(await new EhrClient(settings).createObservation(obs, 'identifier=x')).toMatchObject({ kind: 'auth', httpStatus: 403 });
  });

  it('a token endpoint refusing the client is auth; one that is down is retryable', async () => {
    nock(BASE).post('/oauth/token').reply(401, { error: 'invalid_client' });
    expect((await new EhrClient(settings).createObservation(obs, 'identifier=x')).kind).toBe('auth');
    nock(BASE).post('/oauth/token').reply(503, 'down');
    expect((await new EhrClient(settings).createObservation(obs, 'identifier=x')).kind).toBe('retryable');
  });

  it('no answer before the timeout and a refused connection are retryable', async () => {
    token();
    nock(BASE).post('/fhir/Observation').delay(1000).reply(201, { id: 'late' });
    const r = await new EhrClient(settings).createObservation(obs, 'identifier=x');
    expect(r.kind).toBe('retryable');
    expect(r.httpStatus).toBeNull();
    token();
    nock(BASE).post('/fhir/Observation').replyWithError({ code: 'ECONNRESET', message: 'socket hang up' });
    expect((await new EhrClient(settings).createObservation(obs, 'identifier=x')).kind).toBe('retryable');
  });

  it('a transaction Bundle answered 422 as a whole is rejected; 503 is retryable', async () => {
    token();
    nock(BASE).post('/fhir/').reply(422, outcome('processing', 'entry 3 invalid'));
    const c = new EhrClient(settings);
    const r = await c.transaction({ resourceType: 'Bundle', type: 'transaction', entry: [] });
    expect(r.ok === false && r.outcome.kind).toBe('rejected');
    nock(BASE).post('/fhir/').reply(503, outcome('transient', 'busy'));
    const r2 = await c.transaction({ resourceType: 'Bundle', type: 'transaction', entry: [] });
    expect(r2.ok === false && r2.outcome.kind).toBe('retryable');
  });
});
