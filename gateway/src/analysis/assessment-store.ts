import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import type { AnalysisResult } from '@ebbgate/shared/analysis';
import { AssessmentRow } from '../assessments/assessment.entity';
import { assessmentEvents } from '../assessments/events';

/** Stores an engine result as an assessment row (headline values as columns) and runs the hooks. */
export async function storeAssessment(
  m: EntityManager,
  w: { monitorId: string; bedId: string | null; windowStart: Date; windowEnd: Date },
  result: AnalysisResult,
  challenge: Pick<AssessmentRow, 'tidalVolumeChallenge' | 'challengeDeltaPpv' | 'challengeVerdict' | 'challengeStepAt'> = {
    tidalVolumeChallenge: null,
    challengeDeltaPpv: null,
    challengeVerdict: null,
    challengeStepAt: null,
  },
): Promise<AssessmentRow> {
  const v = (k: keyof AnalysisResult['indices']) => result.indices[k]?.value ?? null;
  const row = m.create(AssessmentRow, {
    id: randomUUID(),
    monitorId: w.monitorId,
    bedId: w.bedId,
    windowStart: w.windowStart,
    windowEnd: w.windowEnd,
    engineVersion: result.engineVersion,
    verdict: result.verdict,
    ppv: v('ppv'),
    spv: v('spv'),
    deltaPop: v('deltaPop'),
    perfusionIndex: v('perfusionIndex'),
    heartRate: v('heartRate'),
    respiratoryRate: v('respiratoryRate'),
    flags: [...new Set(result.flags.map((f) => f.code))],
    result: result as unknown as object,
    enteredInErrorAt: null,
    enteredInErrorBy: null,
    enteredInErrorReason: null,
    ...challenge,
    createdAt: new Date(),
  });
  await m.insert(AssessmentRow, row);
  for (const hook of assessmentEvents(m.connection).stored) await hook(m, row);
  return row;
}
