import type { EntityManager } from 'typeorm';
import type { AnalysisContext } from '@ebbgate/shared';
import type { AnalysisInput, AnalysisSettings, ChallengeInput, ChecklistContext, TidalVolumeChallengeResult } from '@ebbgate/shared/analysis';
import { AssessmentRow } from '../assessments/assessment.entity';
import { assembleWindow } from './window-assembly';

/** How far back a window looks for the tidal volume step of a challenge. */
const LOOK_BACK_SECONDS = 180;
/** Baseline span before the step (at the low volume). */
const BASELINE_SECONDS = 30;

export interface ChallengeFound {
  stepAt: Date;
  input: ChallengeInput;
}

interface MessageSpan {
  start: Date;
  end: Date;
  tidalVolumeMl: number | undefined;
  context: AnalysisContext;
}

/**
 * Looks for a tidal volume challenge the window ending at `windowEnd` completes: the last rise of
 * the batch context's tidal volume within the look-back, held until this window's end for the
 * minimum time (or ended early by a fall, which the engine then calls too short). A challenge
 * already judged for that step is not judged again. Segments: up to 30 s at the low volume before
 * the step, and the span from the step to the window end (or the fall).
 */
export async function findChallenge(
  m: EntityManager,
  monitorId: string,
  windowEnd: Date,
  settings: Pick<AnalysisSettings, 'challengeMinHoldSeconds'>,
  base: { profile: AnalysisContext; bed: ChecklistContext | undefined },
): Promise<ChallengeFound | null> {
  const from = new Date(windowEnd.getTime() - LOOK_BACK_SECONDS * 1000);
  const rows = (await m.query(
    `SELECT s.inbound_message_id AS id, MIN(s.start_time) AS start, MAX(s.end_time) AS end, i.context AS context
     FROM waveform_segment s JOIN inbound_message i ON i.id = s.inbound_message_id
     WHERE s.monitor_id = ? AND s.start_time < ? AND s.end_time > ?
     GROUP BY s.inbound_message_id, i.context ORDER BY start`,
    [monitorId, windowEnd, from],
  )) as { id: string; start: Date; end: Date; context: string | null }[];
  const spans: MessageSpan[] = rows.map((r) => {
    const context = r.context ? (JSON.parse(r.context) as AnalysisContext) : {};
    return { start: new Date(r.start), end: new Date(r.end), tidalVolumeMl: context.tidalVolumeMl, context };
  });
  let step = -1;
  for (let k = 1; k < spans.length; k++) {
    const a = spans[k - 1].tidalVolumeMl;
    const b = spans[k].tidalVolumeMl;
    if (a !== undefined && b !== undefined && b > a) step = k;
  }
  if (step < 0) return null;
  const stepAt = spans[step].start;
  let fall = -1;
  for (let k = step + 1; k < spans.length && fall < 0; k++) if (spans[k].tidalVolumeMl !== spans[step].tidalVolumeMl) fall = k;
  const challengeEnd = fall >= 0 ? spans[fall].start : windowEnd;
  const held = (challengeEnd.getTime() - stepAt.getTime()) / 1000;
  // Judge once: when the volume has been held long enough, or when it fell back early.
  if (fall < 0 && held < settings.challengeMinHoldSeconds) return null;
  if (fall >= 0 && windowEnd < challengeEnd) return null;
  const done = await m.getRepository(AssessmentRow).findOne({ where: { monitorId, challengeStepAt: stepAt }, select: { id: true } });
  if (done) return null;
  const baselineStart = new Date(Math.max(spans[0].start.getTime(), stepAt.getTime() - BASELINE_SECONDS * 1000));
  const seg = async (a: Date, b: Date, context: AnalysisContext): Promise<AnalysisInput> => {
    const { input } = await assembleWindow(m, monitorId, a, b);
    input.context = { ...base.profile, ...context };
    input.bedContext = base.bed;
    return input;
  };
  const segments = [await seg(baselineStart, stepAt, spans[step - 1].context), await seg(stepAt, challengeEnd, spans[step].context)];
  if (segments.some((s) => s.channels.length === 0)) return null;
  return { stepAt, input: { segments } };
}

/** Columns of the assessment row that carry a challenge result. */
export function challengeColumns(
  found: ChallengeFound | null,
  result: TidalVolumeChallengeResult | null,
): Pick<AssessmentRow, 'tidalVolumeChallenge' | 'challengeDeltaPpv' | 'challengeVerdict' | 'challengeStepAt'> {
  if (!found || !result) return { tidalVolumeChallenge: null, challengeDeltaPpv: null, challengeVerdict: null, challengeStepAt: null };
  return {
    tidalVolumeChallenge: result as unknown as object,
    challengeDeltaPpv: result.deltaPpv,
    challengeVerdict: result.verdict,
    challengeStepAt: found.stepAt,
  };
}
