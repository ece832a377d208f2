import { describe, expect, it } from 'vitest';
import { analyseTidalVolumeChallenge } from '@ebbgate/shared/analysis';
import { generateChallenge } from '@ebbgate/shared/synthetic';
import { buildChallengeObservation } from '../../src/analysis/challenge-observation';
import { defaultCodeMap } from '../../src/delivery/code-map';

const codes = defaultCodeMap();
const judge = (kind: 'responder' | 'too-short') => {
  const g = generateChallenge({ seed: 401, kind });
  return analyseTidalVolumeChallenge({ segments: g.segments.map((s) => ({ channels: s.channels, context: s.context })) }).tidalVolumeChallenge;
};
const build = (kind: 'responder' | 'too-short') =>
  buildChallengeObservation({
    assessmentId: 'a9',
    stepAt: new Date('2026-12-01T10:00:30Z'),
    windowEnd: new Date('2026-12-01T10:01:30Z'),
    challenge: judge(kind),
    context: { patientId: 'p1', encounterId: 'e1', locationId: 'l1' },
    deviceId: 'd1',
    status: 'preliminary',
    issued: new Date('2026-12-01T10:01:31Z'),
    codes,
  });

describe('tidal volume challenge Observation (FHIR R4, local code urn:ebbgate:codes)', () => {
  it('a judged challenge: ΔPPV as the value in UCUM %, baseline/challenge/threshold as components, verdict as interpretation', () => {
    const o = build('responder');
    expect(o.code.coding).toEqual([{ system: 'urn:ebbgate:codes', code: 'tidal-volume-challenge', display: expect.any(String) }]);
    expect(o.valueQuantity).toMatchObject({ system: 'http://unitsofmeasure.org', code: '%' });
    expect(o.valueQuantity!.value).toBeGreaterThanOrEqual(3.5);
    expect(o.dataAbsentReason).toBeUndefined();
    expect(o.interpretation![0]!.coding![0]!.code).toBe('tvc-positive');
    expect(o.component!.map((c) => c.code.coding![0]!.code)).toEqual([
      'tvc-baseline-ppv',
      'tvc-challenge-ppv',
      'tvc-threshold',
      'tvc-tidal-volume-low',
      'tvc-tidal-volume-high',
    ]);
    expect(o.note![0]!.text).toMatch(/Myatra/);
    expect(o.identifier[0]!.value).toBe('a9-tidal-volume-challenge');
  });

  it('a challenge that cannot be judged carries a dataAbsentReason, never a value (FHIR R4 obs-6), and says why', () => {
    const o = build('too-short');
    expect(o.valueQuantity).toBeUndefined();
    expect(o.dataAbsentReason!.coding![0]!.code).toBe('not-applicable');
    expect(o.interpretation![0]!.coding![0]!.code).toBe('tvc-cannot-be-judged');
    expect(o.note![0]!.text).toMatch(/not held long enough/);
  });
});
