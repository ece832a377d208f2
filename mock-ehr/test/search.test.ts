import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningMockEhr } from '../src/index.js';
import { fhir, getToken, observation, startTestEhr } from './helpers.js';

// Reference: FHIR R4 search (http://hl7.org/fhir/R4/search.html): token `system|code`, reference
// `Type/id` or bare id, date prefixes ge/le against effective[x] (a Period matches when it overlaps),
// parameters ANDed, comma-separated values ORed, _count limits the page; searchset Bundle with total.

let ehr: RunningMockEhr;
let token: string;
const code = (c: string) => ({ coding: [{ system: 'urn:ebbgate:test:code', code: c }] });
beforeAll(async () => {
  ehr = await startTestEhr();
  token = await getToken(ehr);
  const make = (id: string, extra: Record<string, unknown>) => fhir(ehr, token, 'POST', 'Observation', observation(id, extra));
  await make('s-1', { code: code('ppv'), effectiveDateTime: '2026-12-01T09:00:00Z' });
  await make('s-2', { code: code('spv'), effectiveDateTime: '2026-12-01T11:00:00Z' });
  await make('s-3', { code: code('ppv'), effectivePeriod: { start: '2026-12-01T11:30:00Z', end: '2026-12-01T11:31:00Z' }, status: 'preliminary' });
  await make('s-4', { code: code('ppv'), effectiveDateTime: '2026-12-02T08:00:00Z', subject: { reference: 'Patient/patient-hgh-400245' } });
});
afterAll(() => ehr.stop());

const ids = async (query: string) => {
  const a = await fhir(ehr, token, 'GET', `Observation?${query}`);
  expect(a.status).toBe(200);
  expect(a.body.type).toBe('searchset');
  return (a.body.entry ?? []).map((e: { resource: { identifier: { value: string }[] } }) => e.resource.identifier[0]!.value).sort();
};

describe('FHIR search', () => {
  it('by patient, as Type/id or a bare id', async () => {
    expect(await ids('patient=Patient/patient-hgh-400245')).toEqual(['s-4']);
    expect(await ids('subject=patient-hgh-400245')).toEqual(['s-4']);
  });

  it('by code as system|code, and by several codes ORed', async () => {
    expect(await ids('code=urn:ebbgate:test:code|spv')).toEqual(['s-2']);
    expect(await ids('code=urn:ebbgate:test:code|spv,urn:ebbgate:test:code|ppv&patient=patient-hgh-400117')).toEqual(['s-1', 's-2', 's-3']);
    expect(await ids('code=other-system|ppv')).toEqual([]);
  });

  it('by date with ge and le, a Period matching when it overlaps', async () => {
    expect(await ids('date=ge2026-12-01T10:00:00Z&date=le2026-12-01T23:59:59Z')).toEqual(['s-2', 's-3']);
    expect(await ids('date=2026-12-02')).toEqual(['s-4']);
    expect(await ids('date=le2026-12-01T11:30:30Z&date=ge2026-12-01T11:30:30Z')).toEqual(['s-3']);
  });

  it('by identifier and status', async () => {
    expect(await ids('identifier=urn:ebbgate:test:result|s-3')).toEqual(['s-3']);
    expect(await ids('status=preliminary')).toEqual(['s-3']);
  });

  it('limits the page with _count and still reports the total, with a next link', async () => {
    const a = await fhir(ehr, token, 'GET', 'Observation?code=urn:ebbgate:test:code|ppv&_count=2');
    expect(a.body.total).toBe(3);
    expect(a.body.entry).toHaveLength(2);
    const next = a.body.link.find((l: { relation: string }) => l.relation === 'next').url as string;
    const b = await fhir(ehr, token, 'GET', next.slice(ehr.fhirBaseUrl.length));
    expect(b.body.entry).toHaveLength(1);
  });

  it('finds the in-progress Encounter at a bed by location', async () => {
    const loc = await fhir(ehr, token, 'GET', 'Location?identifier=urn:ebbgate:demo:location|ICU-02');
    expect(loc.body.total).toBe(1);
    const enc = await fhir(ehr, token, 'GET', `Encounter?location=Location/${loc.body.entry[0].resource.id}&status=in-progress`);
    expect(enc.body.total).toBe(1);
    expect(enc.body.entry[0].resource.subject.reference).toBe('Patient/patient-hgh-400245');
  });

  it('refuses an unknown search parameter with 400 and an OperationOutcome', async () => {
    const a = await fhir(ehr, token, 'GET', 'Observation?colour=blue');
    expect(a.status).toBe(400);
    expect(a.body.issue[0]).toMatchObject({ code: 'not-supported', expression: ['colour'] });
  });
});
