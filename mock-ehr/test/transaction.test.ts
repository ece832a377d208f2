import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { admin, fhir, observation, startTestEhrWithToken } from './helpers.js';

// Reference: FHIR R4 RESTful API, "Transaction" (Bundle.type = transaction): processed as a single
// atomic unit (all or nothing); urn:uuid fullUrls are replaced by server ids in every reference;
// the response is a transaction-response Bundle with one entry per request entry, in order, each
// with response.status (and location for created resources).

let ehr: RunningMockEhr;
let token: string;
beforeAll(async () => ({ ehr, token } = await startTestEhrWithToken()));
afterAll(() => ehr?.stop());

const deviceUuid = 'urn:uuid:2b0f6a64-5d0c-4c1e-9a35-7f1e3d1b8c01';
const post = (resource: Record<string, unknown>, fullUrl?: string, ifNoneExist?: string) => ({
  ...(fullUrl ? { fullUrl } : {}),
  resource,
  request: { method: 'POST', url: String(resource.resourceType), ...(ifNoneExist ? { ifNoneExist } : {}) },
});

describe('transaction Bundles', () => {
  it('creates every entry, rewrites urn:uuid references and answers a status per entry', async () => {
    const bundle = {
      resourceType: 'Bundle',
      type: 'transaction',
      entry: [
        post(observation('tx-1', { device: { reference: deviceUuid } })),
        post({ resourceType: 'Device', identifier: [{ system: 'urn:ebbgate:test:device', value: 'tx-dev' }] }, deviceUuid),
      ],
    };
    const a = await fhir(ehr, token, 'POST', '', bundle);
    expect(a.status).toBe(200);
    expect(a.body.type).toBe('transaction-response');
    expect(a.body.entry.map((e: { response: { status: string } }) => e.response.status)).toEqual(['201 Created', '201 Created']);
    const deviceId = a.body.entry[1].resource.id as string;
    expect(a.body.entry[1].response.location).toBe(`Device/${deviceId}/_history/1`);
    expect(a.body.entry[0].resource.device.reference).toBe(`Device/${deviceId}`);
    const stored = await fhir(ehr, token, 'GET', `Observation/${a.body.entry[0].resource.id}`);
    expect(stored.body.device.reference).toBe(`Device/${deviceId}`);
  });

  it('honours ifNoneExist inside the Bundle: a match answers 200 and creates nothing', async () => {
    const entry = post(observation('tx-2'), undefined, 'identifier=urn:ebbgate:test:result|tx-2');
    const first = await fhir(ehr, token, 'POST', '', { resourceType: 'Bundle', type: 'transaction', entry: [entry] });
    const again = await fhir(ehr, token, 'POST', '', { resourceType: 'Bundle', type: 'transaction', entry: [entry] });
    expect(first.body.entry[0].response.status).toBe('201 Created');
    expect(again.body.entry[0].response.status).toBe('200 OK');
    expect(again.body.entry[0].resource.id).toBe(first.body.entry[0].resource.id);
    const counts = await admin(ehr, 'GET', 'observations');
    expect(counts.body.byIdentifier['urn:ebbgate:test:result|tx-2']).toBe(1);
  });

  it("answers a repeated conditional create within one Bundle with the first one's resource", async () => {
    const entry = post(observation('tx-7'), undefined, 'identifier=urn:ebbgate:test:result|tx-7');
    const a = await fhir(ehr, token, 'POST', '', { resourceType: 'Bundle', type: 'transaction', entry: [entry, entry] });
    expect(a.body.entry.map((e: { response: { status: string } }) => e.response.status)).toEqual(['201 Created', '200 OK']);
    expect(a.body.entry[1].resource.id).toBe(a.body.entry[0].resource.id);
    expect((await admin(ehr, 'GET', 'observations')).body.byIdentifier['urn:ebbgate:test:result|tx-7']).toBe(1);
  });

  it('is all or nothing: one invalid entry fails the Bundle and nothing from it is stored', async () => {
    const before = (await admin(ehr, 'GET', 'observations')).body.total as number;
    const bundle = {
      resourceType: 'Bundle',
      type: 'transaction',
      entry: [post(observation('tx-3a')), post(observation('tx-3b', { status: 'not-a-status' }))],
    };
    const a = await fhir(ehr, token, 'POST', '', bundle);
    expect(a.status).toBe(422);
    expect(a.body.resourceType).toBe('OperationOutcome');
    expect(a.body.issue[0].expression[0]).toBe('Bundle.entry[1].resource.status');
    const after = await admin(ehr, 'GET', 'observations');
    expect(after.body.total).toBe(before);
    expect(after.body.byIdentifier['urn:ebbgate:test:result|tx-3a']).toBeUndefined();
  });

  it('rolls back updates too when a later entry fails', async () => {
    const created = await fhir(ehr, token, 'POST', 'Observation', observation('tx-4'));
    const id = created.body.id as string;
    const bundle = {
      resourceType: 'Bundle',
      type: 'transaction',
      entry: [
        { resource: { ...observation('tx-4'), id, status: 'amended' }, request: { method: 'PUT', url: `Observation/${id}` } },
        {
          resource: observation('tx-4b', { subject: { reference: 'Patient?identifier=urn:ebbgate:demo:mrn|NOBODY' } }),
          request: { method: 'POST', url: 'Observation' },
        },
      ],
    };
    const a = await fhir(ehr, token, 'POST', '', bundle);
    expect(a.status).toBe(412); // the conditional reference matched nobody
    const read = await fhir(ehr, token, 'GET', `Observation/${id}`);
    expect(read.body.status).toBe('final');
    expect(read.body.meta.versionId).toBe('1');
  });

  it('resolves conditional references to exactly one resource', async () => {
    const bundle = {
      resourceType: 'Bundle',
      type: 'transaction',
      entry: [post(observation('tx-5', { subject: { reference: 'Patient?identifier=urn:ebbgate:demo:mrn|HGH-400245' } }))],
    };
    const a = await fhir(ehr, token, 'POST', '', bundle);
    expect(a.status).toBe(200);
    expect(a.body.entry[0].resource.subject.reference).toBe('Patient/patient-hgh-400245');
  });

  it('a batch answers each entry on its own', async () => {
    const bundle = {
      resourceType: 'Bundle',
      type: 'batch',
      entry: [post(observation('tx-6')), post(observation('tx-6b', { status: 'bogus' }))],
    };
    const a = await fhir(ehr, token, 'POST', '', bundle);
    expect(a.status).toBe(200);
    expect(a.body.type).toBe('batch-response');
    expect(a.body.entry[0].response.status).toBe('201 Created');
    expect(a.body.entry[1].response.status).toMatch(/^422/);
    expect(a.body.entry[1].response.outcome.resourceType).toBe('OperationOutcome');
  });
});
