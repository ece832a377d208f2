import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { fhir, observation, startTestEhrWithToken } from './helpers.js';

// Reference: FHIR R4 RESTful API, "Conditional create" (If-None-Exist): no match → 201 Created;
// one match → 200 OK and the posted resource is ignored; several matches → 412 Precondition Failed.

let ehr: RunningMockEhr;
let token: string;
beforeAll(async () => ({ ehr, token } = await startTestEhrWithToken()));
afterAll(() => ehr?.stop());

const ifNoneExist = (v: string) => ({ 'If-None-Exist': `identifier=urn:ebbgate:test:result|${v}` });

describe('conditional create', () => {
  it('creates when nothing matches: 201 with Location, versionId 1 and lastUpdated', async () => {
    const a = await fhir(ehr, token, 'POST', 'Observation', observation('cc-1'), ifNoneExist('cc-1'));
    expect(a.status).toBe(201);
    expect(a.headers.get('location')).toBe(`${ehr.fhirBaseUrl}/Observation/${a.body.id}/_history/1`);
    expect(a.headers.get('etag')).toBe('W/"1"');
    expect(a.body.meta.versionId).toBe('1');
    expect(Date.parse(a.body.meta.lastUpdated)).not.toBeNaN();
  });

  it('answers 200 with the existing resource and ignores the post when one matches', async () => {
    const first = await fhir(ehr, token, 'POST', 'Observation', observation('cc-2'), ifNoneExist('cc-2'));
    const again = await fhir(ehr, token, 'POST', 'Observation', observation('cc-2', { status: 'amended' }), ifNoneExist('cc-2'));
    expect(again.status).toBe(200);
    expect(again.body.id).toBe(first.body.id);
    expect(again.body.status).toBe('final'); // the amended body was not stored
    const search = await fhir(ehr, token, 'GET', 'Observation?identifier=urn:ebbgate:test:result|cc-2');
    expect(search.body.total).toBe(1);
  });

  it('answers 412 with an OperationOutcome when several match', async () => {
    await fhir(ehr, token, 'POST', 'Observation', observation('cc-3'));
    await fhir(ehr, token, 'POST', 'Observation', observation('cc-3'));
    const a = await fhir(ehr, token, 'POST', 'Observation', observation('cc-3'), ifNoneExist('cc-3'));
    expect(a.status).toBe(412);
    expect(a.body.resourceType).toBe('OperationOutcome');
    expect(a.body.issue[0]).toMatchObject({ severity: 'error', code: 'multiple-matches' });
  });

  it('updates with PUT and bumps the version; If-Match on a stale version answers 412', async () => {
    const created = await fhir(ehr, token, 'POST', 'Observation', observation('cc-4'));
    const id = created.body.id as string;
    const updated = await fhir(ehr, token, 'PUT', `Observation/${id}`, { ...observation('cc-4'), id, status: 'entered-in-error' });
    expect(updated.status).toBe(200);
    expect(updated.body.meta.versionId).toBe('2');
    const stale = await fhir(ehr, token, 'PUT', `Observation/${id}`, { ...observation('cc-4'), id }, { 'If-Match': 'W/"1"' });
    expect(stale.status).toBe(412);
    const read = await fhir(ehr, token, 'GET', `Observation/${id}`);
    expect(read.body.status).toBe('entered-in-error');
    const v1 = await fhir(ehr, token, 'GET', `Observation/${id}/_history/1`);
    expect(v1.body.status).toBe('final');
  });

  it('conditional update creates on no match and updates the single match', async () => {
    const device = (model: string) => ({ resourceType: 'Device', identifier: [{ system: 'urn:ebbgate:test:device', value: 'mon-7' }], modelNumber: model });
    const a = await fhir(ehr, token, 'PUT', 'Device?identifier=urn:ebbgate:test:device|mon-7', device('A1'));
    expect(a.status).toBe(201);
    const b = await fhir(ehr, token, 'PUT', 'Device?identifier=urn:ebbgate:test:device|mon-7', device('A2'));
    expect(b.status).toBe(200);
    expect(b.body.id).toBe(a.body.id);
    expect(b.body.modelNumber).toBe('A2');
  });
});
