import fhirpath from 'fhirpath';
import r4model from 'fhirpath/fhir-context/r4';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { fhir, observation, startTestEhrWithToken } from './helpers.js';

// References: the FHIR R4 JSON schema (fhir.schema.json, http://hl7.org/fhir/json-schema/4.0) for
// structure; the FHIR R4 Observation invariants obs-6 and obs-7, whose official FHIRPath
// expressions are evaluated below with the independent `fhirpath` package to confirm each example
// really breaks (or keeps) the invariant; FHIR R4 RESTful API: 400 for unparseable content, 422 for
// content that breaks the rules, both with an OperationOutcome.

const OBS_6 = 'dataAbsentReason.empty() or value.empty()';
const OBS_7 = 'value.empty() or component.code.where(coding.intersect(%resource.code.coding).exists()).empty()';
const holds = (expr: string, r: unknown) => (fhirpath.evaluate(r, expr, { resource: r }, r4model) as unknown[])[0] === true;

let ehr: RunningMockEhr;
let token: string;
beforeAll(async () => ({ ehr, token } = await startTestEhrWithToken()));
afterAll(() => ehr?.stop());

describe('validation of posted resources', () => {
  it('answers 400 with an OperationOutcome for a body that is not JSON', async () => {
    const a = await fhir(ehr, token, 'POST', 'Observation', '{"resourceType": "Observation",');
    expect(a.status).toBe(400);
    expect(a.body.issue[0]).toMatchObject({ severity: 'error', code: 'structure' });
  });

  it('answers 422 naming the element for an Observation that breaks the FHIR R4 JSON schema', async () => {
    const bad = observation('v-1', { status: 'done', colour: 'blue' });
    delete (bad as Record<string, unknown>).code;
    const a = await fhir(ehr, token, 'POST', 'Observation', bad);
    expect(a.status).toBe(422);
    expect(a.body.resourceType).toBe('OperationOutcome');
    const where = a.body.issue.map((i: { expression: string[] }) => i.expression[0]).sort();
    expect(where).toEqual(['Observation.code', 'Observation.colour', 'Observation.status']);
    for (const issue of a.body.issue) expect(issue.severity).toBe('error');
    expect(a.body.issue.find((i: { expression: string[] }) => i.expression[0] === 'Observation.code').code).toBe('required');
  });

  it('rejects a wrongly typed value deep inside (valueQuantity.value must be a number)', async () => {
    const a = await fhir(ehr, token, 'POST', 'Observation', observation('v-2', { valueQuantity: { value: '12.5', unit: '%' } }));
    expect(a.status).toBe(422);
    expect(a.body.issue[0].expression[0]).toBe('Observation.valueQuantity.value');
  });

  it('enforces obs-6: dataAbsentReason only without a value', async () => {
    const broken = observation('v-3', {
      dataAbsentReason: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/data-absent-reason', code: 'error' }] },
    });
    expect(holds(OBS_6, broken)).toBe(false);
    const a = await fhir(ehr, token, 'POST', 'Observation', broken);
    expect(a.status).toBe(422);
    expect(a.body.issue[0]).toMatchObject({ code: 'invariant', expression: ['Observation.dataAbsentReason'] });
    const fine = { ...broken, valueQuantity: undefined };
    delete fine.valueQuantity;
    expect(holds(OBS_6, fine)).toBe(true);
    expect((await fhir(ehr, token, 'POST', 'Observation', fine)).status).toBe(201);
  });

  it('enforces obs-7: a component with the Observation code forbids the Observation value', async () => {
    const same = { code: { coding: [{ system: 'urn:ebbgate:test:code', code: 'ppv' }] }, valueQuantity: { value: 3 } };
    const broken = observation('v-4', { component: [{ code: { coding: [{ system: 'urn:ebbgate:test:code', code: 'cycles' }] }, valueInteger: 8 }, same] });
    expect(holds(OBS_7, broken)).toBe(false);
    const a = await fhir(ehr, token, 'POST', 'Observation', broken);
    expect(a.status).toBe(422);
    expect(a.body.issue[0]).toMatchObject({ code: 'invariant', expression: ['Observation.component[1].code'] });
    const fine = observation('v-5', { component: [{ code: { coding: [{ system: 'urn:ebbgate:test:code', code: 'cycles' }] }, valueInteger: 8 }] });
    expect(holds(OBS_7, fine)).toBe(true);
    expect((await fhir(ehr, token, 'POST', 'Observation', fine)).status).toBe(201);
  });

  it('answers 400 when the resourceType does not match the endpoint', async () => {
    const a = await fhir(ehr, token, 'POST', 'Observation', { resourceType: 'Patient' });
    expect(a.status).toBe(400);
    expect(a.body.issue[0].code).toBe('invalid');
  });
});
