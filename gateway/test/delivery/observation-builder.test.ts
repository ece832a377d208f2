import { analyzeWindow, CAUTIONS } from '@ebbgate/shared/analysis';
import { generateWindow } from '@ebbgate/shared/synthetic';
import { describe, expect, it } from 'vitest';
import { backoffDelayMs } from '../../src/delivery/backoff';
import { defaultCodeMap } from '../../src/delivery/code-map';
import { buildObservation, enteredInErrorAmendment, ifNoneExistQuery, type ObservationInput } from '../../src/delivery/observation-builder';
import { classifyHttpStatus, parseRetryAfter } from '../../src/delivery/send-outcome';

const codes = defaultCodeMap();
const context = { ventilationMode: 'controlled' as const, tidalVolumeMl: 650, patientHeightCm: 175, patientSex: 'male' as const, plethScaling: 'raw' as const };
const clean = analyzeWindow({
  channels: generateWindow({ seed: 3, heartRate: 80, respiratoryRate: 15, ppv: 14, channels: ['abp', 'pleth', 'paw'], durationSeconds: 30 }).channels,
  context,
});
const spontaneous = analyzeWindow({
  channels: generateWindow({
    seed: 4,
    heartRate: 80,
    respiratoryRate: 15,
    ppv: 14,
    channels: ['abp', 'pleth', 'paw'],
    durationSeconds: 30,
    disturbances: [{ kind: 'spontaneous-breaths', count: 4 }],
  }).channels,
  context,
});

const base = (over: Partial<ObservationInput> = {}): ObservationInput => ({
  assessmentId: 'a1',
  index: 'ppv',
  windowStart: new Date('2026-12-01T10:00:00Z'),
  windowEnd: new Date('2026-12-01T10:00:30Z'),
  result: clean,
  context: { patientId: 'p1', encounterId: 'e1', locationId: 'l1' },
  deviceId: 'd1',
  status: 'preliminary',
  notValidPolicy: 'data-absent',
  issued: new Date('2026-12-01T10:00:31Z'),
  codes,
  ...over,
});
const obsOf = (over: Partial<ObservationInput> = {}) => {
  const b = buildObservation(base(over));
  if (b.kind !== 'observation') throw new Error('withheld');
  return b.resource;
};

describe('observation builder', () => {
  it('the engine made the scenarios the tests need (clean valid, spontaneous not valid)', () => {
    expect(clean.verdict).toBe('valid');
    expect(spontaneous.verdict).toBe('not-valid');
  });

  it('is pure: the same input gives the same resource', () => {
    expect(JSON.stringify(obsOf())).toBe(JSON.stringify(obsOf()));
  });

  // standards.md: no LOINC code exists for PPV, SPV or pleth amplitude variation: never invent one.
  it('PPV, SPV and ΔPOP carry no LOINC coding; PI carries MDC 150448 (standards.md, confirmed)', () => {
    for (const index of ['ppv', 'spv', 'deltaPop'] as const) {
      const systems = obsOf({ index }).code.coding!.map((c) => c.system);
      expect(systems).not.toContain('http://loinc.org');
      expect(systems).toContain(codes.localSystem);
    }
    const pi = obsOf({ index: 'perfusionIndex' }).code.coding!;
    expect(pi).toContainEqual(expect.objectContaining({ system: 'urn:iso:std:iso:11073:10101', code: '150448' }));
  });

  // standards.md: "PPV-like indices are not vital signs: choose the category deliberately".
  it('is not filed as vital-signs', () => {
    const cats = obsOf().category.flatMap((c) => c.coding!.map((x) => x.code));
    expect(cats).not.toContain('vital-signs');
    expect(cats).toContain('procedure');
  });

  it('sends the value in UCUM with the window as effectivePeriod, subject, encounter and device', () => {
    const o = obsOf();
    expect(o.valueQuantity).toMatchObject({ system: 'http://unitsofmeasure.org', code: '%' });
    expect(o.valueQuantity!.value).toBeCloseTo(clean.indices.ppv.value!, 3);
    expect(obsOf({ index: 'spv' }).valueQuantity!.code).toBe('mm[Hg]');
    expect(o.effectivePeriod).toEqual({ start: '2026-12-01T10:00:00.000Z', end: '2026-12-01T10:00:30.000Z' });
    expect(o.subject).toEqual({ reference: 'Patient/p1' });
    expect(o.encounter).toEqual({ reference: 'Encounter/e1' });
    expect(o.device).toEqual({ reference: 'Device/d1' });
  });

  it('carries cycles used and spread as components, and the status chosen by setting', () => {
    const o = obsOf({ status: 'final' });
    expect(o.status).toBe('final');
    const byCode = Object.fromEntries(o.component!.map((c) => [c.code.coding!.at(-1)!.code, c]));
    expect(byCode['cycles-used']!.valueInteger).toBe(clean.indices.ppv.cyclesUsed);
    expect(byCode['cycle-spread']!.valueQuantity!.value).toBeCloseTo(clean.indices.ppv.spread!, 3);
    expect(byCode['respiratory-rate']!.code.coding).toContainEqual(expect.objectContaining({ system: 'http://loinc.org', code: '9279-1' }));
  });

  // domain.md "Cautions the product must show": every Observation carries them.
  it('puts the verdict, the flags and every caution in interpretation and note', () => {
    const o = obsOf({ result: spontaneous, notValidPolicy: 'data-absent' });
    const text = o.note!.map((n) => n.text).join('\n');
    for (const c of CAUTIONS) expect(text).toContain(c);
    expect(text).toContain('spontaneous-breathing');
    expect(o.interpretation![0]!.coding).toContainEqual(expect.objectContaining({ code: 'IND' }));
  });

  it('not-valid results: withheld, or sent with dataAbsentReason and no value (obs-6), by setting', () => {
    expect(buildObservation(base({ result: spontaneous, notValidPolicy: 'withhold' })).kind).toBe('withheld');
    const o = obsOf({ result: spontaneous, notValidPolicy: 'data-absent' });
    expect(o.valueQuantity).toBeUndefined();
    expect(o.dataAbsentReason!.coding![0]!.system).toBe('http://terminology.hl7.org/CodeSystem/data-absent-reason');
  });

  it('identifier is per assessment and index, and If-None-Exist searches on it', () => {
    const o = obsOf();
    expect(o.identifier[0]).toMatchObject({ system: 'urn:ebbgate:observation', value: 'a1-ppv' });
    expect(decodeURIComponent(ifNoneExistQuery(o.identifier[0] as { system: string; value: string }))).toBe('identifier=urn:ebbgate:observation|a1-ppv');
    expect(obsOf({ index: 'spv' }).identifier[0]!.value).toBe('a1-spv');
  });

  it('the amendment keeps the resource and id, sets entered-in-error and says who and why', () => {
    const a = enteredInErrorAmendment(obsOf(), 'srv-9', 'Dr Reviewer', 'wrong patient', new Date('2026-12-01T12:00:00Z'));
    expect(a).toMatchObject({ id: 'srv-9', status: 'entered-in-error', identifier: obsOf().identifier });
    expect(a.note!.at(-1)!.text).toContain('wrong patient');
  });
});

describe('delivery rules', () => {
  // FHIR R4 http.html and RFC 9110: 408/429/5xx transient; 401/403 credentials; other 4xx final.
  it('classifies HTTP answers', () => {
    expect([200, 201].map(classifyHttpStatus)).toEqual(['delivered', 'delivered']);
    expect([400, 404, 412, 422].map(classifyHttpStatus)).toEqual(['rejected', 'rejected', 'rejected', 'rejected']);
    expect([401, 403].map(classifyHttpStatus)).toEqual(['auth', 'auth']);
    expect([408, 429, 500, 502, 503, 504].every((s) => classifyHttpStatus(s) === 'retryable')).toBe(true);
  });

  it('reads Retry-After as seconds or as an HTTP date (RFC 9110 §10.2.3)', () => {
    expect(parseRetryAfter('7')).toBe(7000);
    expect(parseRetryAfter('Tue, 01 Dec 2026 10:00:10 GMT', Date.parse('2026-12-01T10:00:00Z'))).toBe(10_000);
    expect(parseRetryAfter(undefined)).toBeUndefined();
  });

  it('backs off exponentially with jitter between half and all of the capped delay', () => {
    const s = { baseMs: 1000, maxMs: 60_000 };
    expect(backoffDelayMs(1, s, () => 0)).toBe(500);
    expect(backoffDelayMs(1, s, () => 1)).toBe(1000);
    expect(backoffDelayMs(4, s, () => 1)).toBe(8000);
    expect(backoffDelayMs(20, s, () => 1)).toBe(60_000);
    expect(backoffDelayMs(20, s, () => 0)).toBe(30_000);
  });
});
