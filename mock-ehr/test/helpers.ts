import { startMockEhr, type MockEhrOptions, type RunningMockEhr } from '../src/index.js';

// Shared test plumbing: a mock EHR on free loopback ports and a small FHIR client over fetch.

export const CLIENT = { id: 'test-client', secret: 'test-secret-1234' };

export function startTestEhr(extra: MockEhrOptions = {}): Promise<RunningMockEhr> {
  return startMockEhr({ httpPort: 0, smtpPort: 0, mllpPort: 0, clientId: CLIENT.id, clientSecret: CLIENT.secret, ...extra });
}

/** A mock EHR for a test file and a token of the test client, for `beforeAll`. */
export async function startTestEhrWithToken(extra: MockEhrOptions = {}): Promise<{ ehr: RunningMockEhr; token: string }> {
  const ehr = await startTestEhr(extra);
  try {
    return { ehr, token: await getToken(ehr) };
  } catch (err) {
    await ehr.stop();
    throw err;
  }
}

export async function getToken(ehr: RunningMockEhr): Promise<string> {
  const res = await fetch(ehr.tokenUrl, {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams({ grant_type: 'client_credentials', client_id: CLIENT.id, client_secret: CLIENT.secret }),
  });
  if (res.status !== 200) throw new Error(`token request failed: ${res.status}`);
  return ((await res.json()) as { access_token: string }).access_token;
}

export interface FhirAnswer {
  status: number;
  headers: Headers;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  body: any;
}

export async function fhir(
  ehr: RunningMockEhr,
  token: string,
  method: string,
  path: string,
  body?: unknown,
  headers: Record<string, string> = {},
): Promise<FhirAnswer> {
  const res = await fetch(`${ehr.fhirBaseUrl}/${path.replace(/^\//, '')}`, {
    method,
    headers: {
      authorization: `Bearer ${token}`,
      accept: 'application/fhir+json',
      ...(body !== undefined ? { 'content-type': 'application/fhir+json' } : {}),
      ...headers,
    },
    body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body),
  });
  const text = await res.text();
  return { status: res.status, headers: res.headers, body: text ? JSON.parse(text) : undefined };
}

export async function admin(ehr: RunningMockEhr, method: string, path: string, body?: unknown): Promise<FhirAnswer> {
  const res = await fetch(`${ehr.baseUrl}/_admin/${path}`, {
    method,
    headers: body === undefined ? {} : { 'content-type': 'application/json' },
    body: body === undefined ? undefined : JSON.stringify(body),
  });
  const text = await res.text();
  return { status: res.status, headers: res.headers, body: text ? JSON.parse(text) : undefined };
}

/** A minimal valid Observation (FHIR R4: status and code are required). */
export function observation(identifierValue: string, extra: Record<string, unknown> = {}): { resourceType: string } & Record<string, unknown> {
  return {
    resourceType: 'Observation',
    identifier: [{ system: 'urn:ebbgate:test:result', value: identifierValue }],
    status: 'final',
    code: { coding: [{ system: 'urn:ebbgate:test:code', code: 'ppv' }] },
    subject: { reference: 'Patient/patient-hgh-400117' },
    effectiveDateTime: '2026-12-01T10:00:00Z',
    valueQuantity: { value: 12.5, unit: '%', system: 'http://unitsofmeasure.org', code: '%' },
    ...extra,
  };
}
