import { Client } from 'fhir-kit-client';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { getToken, observation, startTestEhr } from './helpers.js';

// The mock driven by the independent FHIR client the gateway uses (fhir-kit-client 2.0.3), so the
// two agree on headers, bodies and error shapes.

let ehr: RunningMockEhr;
let client: Client;
beforeAll(async () => {
  ehr = await startTestEhr();
  client = new Client({ baseUrl: ehr.fhirBaseUrl, bearerToken: await getToken(ehr) });
});
afterAll(() => ehr.stop());

/** fhir-kit-client answers a generic FhirResource; the tests read the fields they check. */
const answer = <T>(p: Promise<unknown>) => p as Promise<T>;

describe('with fhir-kit-client', () => {
  it('walks bed → Location → in-progress Encounter → Patient by search', async () => {
    const locs = await answer<{ entry: { resource: { id: string } }[] }>(
      client.search({ resourceType: 'Location', searchParams: { identifier: 'urn:ebbgate:demo:location|OR-01' } }),
    );
    const encs = await answer<{ entry: { resource: { subject: { reference: string } } }[] }>(
      client.search({ resourceType: 'Encounter', searchParams: { location: `Location/${locs.entry[0]!.resource.id}`, status: 'in-progress' } }),
    );
    const [type, id] = encs.entry[0]!.resource.subject.reference.split('/') as [string, string];
    const patient = await answer<{ name: { family: string }[] }>(client.read({ resourceType: type, id }));
    expect(patient.name[0]!.family).toBe('Fenwick-Laine');
  });

  it('creates conditionally with an If-None-Exist header and gets the same resource back the second time', async () => {
    const headers = { 'If-None-Exist': 'identifier=urn:ebbgate:test:result|fkc-1' };
    const a = await answer<{ id: string }>(client.create({ resourceType: 'Observation', body: observation('fkc-1'), options: { headers } }));
    const b = await answer<{ id: string }>(client.create({ resourceType: 'Observation', body: observation('fkc-1'), options: { headers } }));
    expect(b.id).toBe(a.id);
  });

  it('posts a transaction Bundle', async () => {
    const res = await answer<{ type: string; entry: { response: { status: string } }[] }>(
      client.transaction({
        body: { resourceType: 'Bundle', type: 'transaction', entry: [{ resource: observation('fkc-2'), request: { method: 'POST', url: 'Observation' } }] },
      }),
    );
    expect(res.type).toBe('transaction-response');
    expect(res.entry[0]!.response.status).toBe('201 Created');
  });

  it('surfaces a 422 with the OperationOutcome as the error body', async () => {
    const err = await answer<{ response: { status: number; data: { resourceType: string } } }>(
      client.create({ resourceType: 'Observation', body: observation('fkc-3', { status: 'nope' }) }).catch((e: unknown) => e),
    );
    expect(err.response.status).toBe(422);
    expect(err.response.data.resourceType).toBe('OperationOutcome');
  });
});
