/**
 * One outbox row → the Observation it carries: an index of the assessment's result, or the tidal
 * volume challenge the assessment completed. Both destinations (FHIR, HL7 v2) build through here,
 * so each carries the same resource. Pure: `issued` is passed in.
 */
import type { AnalysisResult, TidalVolumeChallengeResult } from '@ebbgate/shared/analysis';
import type { AssessmentRow } from '../assessments/assessment.entity';
import { buildChallengeObservation, CHALLENGE_DELIVERY } from '../analysis/challenge-observation';
import type { CodeMap, DeliveredIndex } from './code-map';
import { buildObservation, type BuildOutcome, type NotValidPolicy, type ObservationStatusSetting, type PatientContext } from './observation-builder';

export interface RowObservationInput {
  indexName: string;
  assessment: AssessmentRow;
  context: PatientContext;
  deviceId: string | null;
  status: ObservationStatusSetting;
  notValidPolicy: NotValidPolicy;
  issued: Date;
  codes: CodeMap;
}

/** Under the withhold setting a challenge that cannot be judged is not sent (as a not-valid index is not). */
export function challengeWithheldReason(challenge: TidalVolumeChallengeResult, policy: NotValidPolicy): string | null {
  if (policy !== 'withhold' || challenge.verdict !== 'cannot-be-judged') return null;
  return `challenge cannot be judged: withheld by setting${challenge.reasonTexts.length ? ` (${challenge.reasonTexts.join('; ')})` : ''}`;
}

export function buildRowObservation(i: RowObservationInput): BuildOutcome {
  const a = i.assessment;
  if (i.indexName === CHALLENGE_DELIVERY) {
    const challenge = a.tidalVolumeChallenge as TidalVolumeChallengeResult | null;
    if (!challenge || !a.challengeStepAt) throw new Error(`assessment ${a.id} carries no tidal volume challenge`);
    const withheld = challengeWithheldReason(challenge, i.notValidPolicy);
    if (withheld) return { kind: 'withheld', reason: withheld };
    const resource = buildChallengeObservation({
      assessmentId: a.id,
      stepAt: new Date(a.challengeStepAt),
      windowEnd: a.windowEnd,
      challenge,
      context: i.context,
      deviceId: i.deviceId,
      status: i.status,
      issued: i.issued,
      codes: i.codes,
    });
    return { kind: 'observation', resource };
  }
  return buildObservation({
    assessmentId: a.id,
    index: i.indexName as DeliveredIndex,
    windowStart: a.windowStart,
    windowEnd: a.windowEnd,
    result: a.result as AnalysisResult,
    context: i.context,
    deviceId: i.deviceId,
    status: i.status,
    notValidPolicy: i.notValidPolicy,
    issued: i.issued,
    codes: i.codes,
  });
}
