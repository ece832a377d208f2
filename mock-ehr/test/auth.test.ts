import jwt from 'jsonwebtoken';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { CLIENT, fhir, getToken, startTestEhr } from './helpers.js';

// References: RFC 6749 §4.4 (client credentials grant) and §5.2 (error answers), §2.3.1 (client
// password by HTTP Basic or form fields); RFC 7523 §2.2 (JWT client assertion, signed here with the
// independent jsonwebtoken library); RFC 6750 §3 (401 + WWW-Authenticate for a missing/invalid bearer).

let ehr: RunningMockEhr;
beforeAll(async () => {
  ehr = await startTestEhr({ tokenTtlSeconds: 1 });
});
afterAll(() => ehr.stop());

const form = (fields: Record<string, string>, headers: Record<string, string> = {}) =>
  fetch(ehr.tokenUrl, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', ...headers }, body: new URLSearchParams(fields) });

describe('OAuth2 client credentials and bearer tokens', () => {
  it('refuses FHIR calls without a token (401 + WWW-Authenticate Bearer), but serves metadata', async () => {
    const res = await fetch(`${ehr.fhirBaseUrl}/Patient`);
    expect(res.status).toBe(401);
    expect(res.headers.get('www-authenticate')).toMatch(/^Bearer /);
    expect(((await res.json()) as { resourceType: string }).resourceType).toBe('OperationOutcome');
    expect((await fetch(`${ehr.fhirBaseUrl}/metadata`)).status).toBe(200);
  });

  it('issues a Bearer token for form credentials and for HTTP Basic', async () => {
    const a = await form({ grant_type: 'client_credentials', client_id: CLIENT.id, client_secret: CLIENT.secret });
    const body = (await a.json()) as Record<string, unknown>;
    expect(a.status).toBe(200);
    expect(body).toMatchObject({ token_type: 'Bearer', expires_in: 1 });
    const basic = Buffer.from(`${CLIENT.id}:${CLIENT.secret}`).toString('base64');
    const b = await form({ grant_type: 'client_credentials' }, { authorization: `Basic ${basic}` });
    expect(b.status).toBe(200);
    const search = await fhir(ehr, ((await b.json()) as { access_token: string }).access_token, 'GET', 'Patient');
    expect(search.status).toBe(200);
  });

  it('answers invalid_client (401) for a wrong secret and unsupported_grant_type (400) for another grant', async () => {
    const bad = await form({ grant_type: 'client_credentials', client_id: CLIENT.id, client_secret: 'wrong' });
    expect(bad.status).toBe(401);
    expect(((await bad.json()) as { error: string }).error).toBe('invalid_client');
    const grant = await form({ grant_type: 'password', client_id: CLIENT.id, client_secret: CLIENT.secret });
    expect(grant.status).toBe(400);
    expect(((await grant.json()) as { error: string }).error).toBe('unsupported_grant_type');
  });

  it('accepts an HS256 client assertion and rejects one for the wrong audience', async () => {
    const sign = (aud: string) =>
      jwt.sign({ jti: `j-${aud.length}` }, CLIENT.secret, { algorithm: 'HS256', issuer: CLIENT.id, subject: CLIENT.id, audience: aud, expiresIn: 60 });
    const type = 'urn:ietf:params:oauth:client-assertion-type:jwt-bearer';
    const good = await form({ grant_type: 'client_credentials', client_assertion_type: type, client_assertion: sign(ehr.tokenUrl) });
    expect(good.status).toBe(200);
    const wrong = await form({ grant_type: 'client_credentials', client_assertion_type: type, client_assertion: sign('http://elsewhere/token') });
    expect(wrong.status).toBe(401);
  });

  it('refuses a token once it has expired', async () => {
    const token = await getToken(ehr);
    expect((await fhir(ehr, token, 'GET', 'Location')).status).toBe(200);
    await new Promise((r) => setTimeout(r, 1100));
    const late = await fhir(ehr, token, 'GET', 'Location');
    expect(late.status).toBe(401);
    expect(late.body.issue[0].code).toBe('login');
  });
});
