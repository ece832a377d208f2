/**
 * Pure builder: a tidal volume challenge result → one FHIR R4 Observation with a local code
 * (urn:ebbgate:codes; no LOINC or MDC code exists for it). No I/O, no clock: `issued` is passed in.
 */
import type { TidalVolumeChallengeResult } from '@ebbgate/shared/analysis';
import type { CodeMap } from '../delivery/code-map';
import type { CodeableConcept, Observation, ObservationComponent, Quantity } from '../delivery/fhir-types';
import type { PatientContext } from '../delivery/observation-builder';

export interface ChallengeObservationInput {
  assessmentId: string;
  /** From the step to the end of the window that completed the challenge. */
  stepAt: Date;
  windowEnd: Date;
  challenge: TidalVolumeChallengeResult;
  context: PatientContext;
  deviceId: string | null;
  status: 'preliminary' | 'final';
  issued: Date;
  codes: CodeMap;
}

const LOCAL = {
  code: { code: 'tidal-volume-challenge', display: 'Tidal volume challenge: rise of PPV (points)' },
  baseline: { code: 'tvc-baseline-ppv', display: 'PPV at the low tidal volume' },
  challenge: { code: 'tvc-challenge-ppv', display: 'PPV after one minute at the higher tidal volume' },
  threshold: { code: 'tvc-threshold', display: 'Rise of PPV at or above which the test is positive' },
  vtLow: { code: 'tvc-tidal-volume-low', display: 'Tidal volume before the step' },
  vtHigh: { code: 'tvc-tidal-volume-high', display: 'Tidal volume during the challenge' },
  verdict: {
    positive: { code: 'tvc-positive', display: 'Positive: PPV rose by the threshold or more' },
    negative: { code: 'tvc-negative', display: 'Negative: PPV rose by less than the threshold' },
    'cannot-be-judged': { code: 'tvc-cannot-be-judged', display: 'Cannot be judged' },
  },
} as const;

function quantity(codes: CodeMap, value: number, unit: string, display: string): Quantity {
  return { value: Math.round(value * 10_000) / 10_000, unit: display, system: codes.ucumSystem, code: unit };
}

const local = (codes: CodeMap, c: { code: string; display: string }): CodeableConcept => ({
  coding: [{ system: codes.localSystem, code: c.code, display: c.display }],
  text: c.display,
});

/** The delivery row name (delivery.index_name) of a challenge result, beside ppv, spv, deltaPop, perfusionIndex. */
export const CHALLENGE_DELIVERY = 'tidalVolumeChallenge';

/** The idempotency identifier, as observationIdentifier gives the indices: one per assessment. */
export function challengeIdentifier(codes: CodeMap, assessmentId: string): { system: string; value: string } {
  return { system: codes.identifierSystems.observation, value: `${assessmentId}-${LOCAL.code.code}` };
}

export function buildChallengeObservation(input: ChallengeObservationInput): Observation {
  const { codes, challenge: t } = input;
  const judged = t.verdict !== 'cannot-be-judged' && t.deltaPpv !== null;
  const comp: ObservationComponent[] = [];
  const add = (c: { code: string; display: string }, v: number | null, unit: string, display: string): void => {
    if (v !== null) comp.push({ code: local(codes, c), valueQuantity: quantity(codes, v, unit, display) });
  };
  add(LOCAL.baseline, t.baselinePpv, '%', '%');
  add(LOCAL.challenge, t.challengePpv, '%', '%');
  add(LOCAL.threshold, t.threshold, '%', 'percentage points');
  add(LOCAL.vtLow, t.baselineTidalVolumeMl, 'mL', 'mL');
  add(LOCAL.vtHigh, t.challengeTidalVolumeMl, 'mL', 'mL');
  const v = LOCAL.verdict[t.verdict];
  const lines = [`Verdict: ${v.display}.`, `Threshold ${t.threshold} points: ${t.thresholdSource}.`];
  if (t.reasonTexts.length) lines.push(`Cannot be judged: ${t.reasonTexts.join('; ')}.`);
  return {
    resourceType: 'Observation',
    identifier: [{ use: 'official', ...challengeIdentifier(codes, input.assessmentId) }],
    status: input.status,
    category: [
      { coding: codes.category.coding },
      { coding: [{ system: codes.localSystem, code: codes.category.local.code, display: codes.category.local.display }] },
    ],
    code: local(codes, LOCAL.code),
    subject: { reference: `Patient/${input.context.patientId}` },
    encounter: { reference: `Encounter/${input.context.encounterId}` },
    effectivePeriod: { start: input.stepAt.toISOString(), end: input.windowEnd.toISOString() },
    issued: input.issued.toISOString(),
    ...(input.deviceId ? { device: { reference: `Device/${input.deviceId}` } } : {}),
    // obs-6: a value or a dataAbsentReason, never both.
    ...(judged
      ? { valueQuantity: quantity(codes, t.deltaPpv as number, '%', 'percentage points') }
      : {
          dataAbsentReason: {
            coding: [{ system: codes.dataAbsentReasonSystem, code: codes.dataAbsentReason.notValid.code, display: codes.dataAbsentReason.notValid.display }],
            text: codes.dataAbsentReason.notValid.display,
          },
        }),
    interpretation: [{ coding: [{ system: codes.localSystem, code: v.code, display: v.display }], text: v.display }],
    note: [{ text: lines.join(' ') }, { text: `Cautions: ${t.cautions.join(' ')}` }],
    method: {
      text: `Tidal volume challenge (Myatra et al., Crit Care Med 2017): PPV before and after raising tidal volume from about 6 to 8 mL/kg PBW; engine ${t.engineVersion}`,
    },
    component: comp,
  };
}
