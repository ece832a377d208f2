/**
 * The HL7 v2 destination's ORU^R01, read back with an independent parser (node-hl7-client) and
 * checked against the IHE PCD-01 notes in standards.md (IHE PCD TF-2: OBX-3 code^REFID^MDC,
 * dotted OBX-4, OBX-6 units, OBX-17 ACALC, OBX-18 EUI-64, MSH-21 profile) and HL7 table 0085 (OBX-11).
 */
import { Message } from 'node-hl7-client';
import { describe, expect, it } from 'vitest';
import { defaultCodeMap } from '@ebbgate/gateway/delivery/code-map';
import { buildObservation, enteredInErrorAmendment } from '@ebbgate/gateway/delivery/observation-builder';
import type { Observation } from '@ebbgate/gateway/delivery/fhir-types';
import { buildOru } from '@ebbgate/gateway/delivery/oru-message';
import { scenarios } from './engine-results';
import { ucumStatus } from './fhir-conformance';

const codes = defaultCodeMap();
const [clean, spontaneous] = scenarios();

function observation(result = clean!.result, index: 'ppv' | 'perfusionIndex' = 'ppv'): Observation {
  const b = buildObservation({
    assessmentId: 'a7',
    index,
    windowStart: new Date('2026-12-01T10:00:00Z'),
    windowEnd: new Date('2026-12-01T10:00:30Z'),
    result,
    context: { patientId: 'p', encounterId: 'e', locationId: 'icu-01' },
    deviceId: null,
    status: 'final',
    notValidPolicy: 'data-absent',
    issued: new Date(),
    codes,
  });
  if (b.kind !== 'observation') throw new Error('withheld');
  return b.resource;
}

const oru = (o: Observation) =>
  buildOru(codes, {
    observation: o,
    controlId: 'a7-ppv-create',
    mrn: 'HGH-400117',
    locationIdentifier: 'ICU-01',
    sendingFacility: 'HGH',
    receivingApplication: 'HGH-EHR',
    monitorIdentifier: '0223456789ABCDEF',
    at: new Date('2026-12-01T10:00:31Z'),
  });

describe('ORU^R01 (IHE PCD-01 style)', () => {
  it('has the header, patient, order and observation segments in order', () => {
    const text = oru(observation());
    const m = new Message({ text });
    expect(m.get('MSH.9.1').toString()).toBe('ORU');
    expect(m.get('MSH.9.2').toString()).toBe('R01');
    expect(m.get('MSH.10').toString()).toBe('a7-ppv-create');
    expect(m.get('MSH.12').toString()).toBe('2.6');
    expect(m.get('MSH.21.1').toString()).toBe('IHE_PCD_001'); // standards.md: PCD-01 profile id
    expect(m.get('PID.3.1').toString()).toBe('HGH-400117');
    expect(
      text
        .split('\r')
        .filter(Boolean)
        .map((s) => s.slice(0, 3)),
    ).toEqual(['MSH', 'PID', 'PV1', 'OBR', 'OBX', 'NTE', 'NTE']);
  });

  it('OBX carries the value, UCUM unit, computed-value marker, equipment and status', () => {
    const o = observation();
    const m = new Message({ text: oru(o) });
    expect(m.get('OBX.2').toString()).toBe('NM');
    expect(m.get('OBX.3.3').toString()).toBe('99EBG'); // no MDC code for PPV: local coding system
    expect(m.get('OBX.4').toString()).toMatch(/^\d+\.\d+\.\d+\.\d+$/); // dotted MDS.VMD.Channel.Metric
    expect(Number(m.get('OBX.5').toString())).toBeCloseTo(o.valueQuantity!.value, 6);
    expect(m.get('OBX.6.3').toString()).toBe('UCUM');
    expect(ucumStatus(m.get('OBX.6.1').toString())).toBe('valid'); // NLM ucum-lhc
    expect(m.get('OBX.11').toString()).toBe('F'); // table 0085: final
    expect(m.get('OBX.17.1').toString()).toBe('ACALC');
    expect(m.get('OBX.18.4').toString()).toBe('EUI-64');
  });

  it('perfusion index is coded code^REFID^MDC with 150448 (standards.md, confirmed)', () => {
    const m = new Message({ text: oru(observation(clean!.result, 'perfusionIndex')) });
    expect([m.get('OBX.3.1').toString(), m.get('OBX.3.2').toString(), m.get('OBX.3.3').toString()]).toEqual(['150448', 'MDC_PULS_OXIM_PERF_REL', 'MDC']);
  });

  it('a not-valid result has no value and status X; an entered-in-error amendment has status W (table 0085)', () => {
    const absent = new Message({ text: oru(observation(spontaneous!.result)) });
    expect(absent.get('OBX.5').toString()).toBe('');
    expect(absent.get('OBX.11').toString()).toBe('X');
    const wrong = new Message({ text: oru(enteredInErrorAmendment(observation(), 'o1', 'r', 'wrong bed', new Date())) });
    expect(wrong.get('OBX.11').toString()).toBe('W');
  });

  it('escapes delimiters in free text so notes cannot break the segment (HL7 v2 ch. 2 escape sequences)', () => {
    const o = { ...observation(), note: [{ text: 'a|b^c&d~e\\f' }] };
    const text = oru(o);
    const nte = text.split('\r').find((s) => s.startsWith('NTE'))!;
    expect(nte.split('|')).toHaveLength(4);
    expect(nte).toContain('a\\F\\b\\S\\c\\T\\d\\R\\e\\E\\f');
  });
});
