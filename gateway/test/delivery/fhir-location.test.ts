/**
 * Location of a created resource, read as FHIR R4 http.html#create gives it ("the Location header
 * ... contains the new Logical Id and Version Id of the created resource version: Location:
 * [base]/[type]/[id]/_history/[vid]") and as transaction responses give it (Bundle.entry.response
 * .location, relative to the base in the spec's own examples, e.g. "Patient/12423/_history/1").
 */
import { describe, expect, it } from 'vitest';
import { parseResourceLocation } from '../../src/delivery/fhir-location';

describe('parseResourceLocation', () => {
  it.each([
    ['Observation/abc-123/_history/1', { id: 'abc-123', versionId: '1' }],
    ['Observation/abc-123', { id: 'abc-123', versionId: null }],
    ['http://ehr.harrowmere.example/fhir/Observation/abc-123/_history/7', { id: 'abc-123', versionId: '7' }],
    ['https://ehr.harrowmere.example:8443/r4/Observation/9f2.x/', { id: '9f2.x', versionId: null }],
    ['/fhir/Observation/abc-123/_history/2?_format=json', { id: 'abc-123', versionId: '2' }],
    // A base path that itself contains the type name: the last occurrence is the resource.
    ['http://h.example/Observation/fhir/Observation/xyz/_history/3', { id: 'xyz', versionId: '3' }],
  ])('%s', (location, expected) => {
    expect(parseResourceLocation(location, 'Observation')).toEqual(expected);
  });

  it.each([[undefined], [''], ['Patient/abc'], ['Observation'], ['Observation/abc/extra/parts'], ['Observation/has space'], ['http://[bad']])(
    '%s gives null (no guess)',
    (location) => {
      expect(parseResourceLocation(location as string | undefined, 'Observation')).toBeNull();
    },
  );

  it('the old split("/")[1] took the wrong part of an absolute Location (the regression this replaces)', () => {
    const absolute = 'http://ehr.harrowmere.example/fhir/Observation/abc-123/_history/1';
    expect(absolute.split('/')[1]).toBe('');
    expect(parseResourceLocation(absolute, 'Observation')?.id).toBe('abc-123');
  });
});
