/**
 * Test support (not part of the engine): compares an engine result with the synthetic truth (beat
 * matching, PPV over the same cycles, truth over the last clean cycles). Used by the tests only.
 */
import type { AnalysisResult } from '../../analysis/types';
import type { SyntheticTruth, TruthCycle } from '../types';

export interface BeatMatch {
  truePositives: number;
  falseNegatives: number;
  falsePositives: number;
}

/** Matches detected systolic peaks to the peaks put in, within tol seconds, away from the edges. */
export function matchBeats(times: number[], truth: number[], duration: number, tol = 0.05): BeatMatch {
  const inside = (t: number): boolean => t >= 0.6 && t <= duration - 0.6;
  const ref = truth.filter(inside);
  const det = times.filter(inside);
  let tp = 0;
  let j = 0;
  const used = new Uint8Array(det.length);
  for (const r of ref) {
    while (j < det.length && det[j] < r - tol) j++;
    let k = j;
    while (k < det.length && det[k] <= r + tol && used[k]) k++;
    if (k < det.length && Math.abs(det[k] - r) <= tol && !used[k]) {
      used[k] = 1;
      tp++;
    }
  }
  return { truePositives: tp, falseNegatives: ref.length - tp, falsePositives: det.length - tp };
}

/** Mean of the truth's per-cycle values over the cycles the engine averaged (matched by start time). */
export function truthOverUsedCycles(result: AnalysisResult, truth: SyntheticTruth, key: 'ppv' | 'deltaPop' | 'spv'): number | null {
  const used = result.cycles.filter((c) => c.usedInWindow);
  if (used.length === 0) return null;
  const values: number[] = [];
  for (const c of used) {
    let best = null as null | (typeof truth.cycles)[number];
    for (const t of truth.cycles) if (!best || Math.abs(t.startTime - c.startTime) < Math.abs(best.startTime - c.startTime)) best = t;
    if (!best || Math.abs(best.startTime - c.startTime) > 0.35) return null;
    const v = best[key];
    if (v === null) return null;
    values.push(v);
  }
  return values.reduce((a, b) => a + b, 0) / values.length;
}

/**
 * Mean of a truth field over the last `count` clean cycles put in: no ectopic beat, no effort, and
 * at least `minBeats` beats (HR/RR above 3.6, De Backer et al., Anesthesiology 2009, so 4 beats).
 */
export function truthLastCleanCycles(truth: SyntheticTruth, key: 'ppv' | 'spv' | 'deltaPop', count = 3, minBeats = 4): number | null {
  const clean = truth.cycles
    .filter((c: TruthCycle) => c[key] !== null && c.beatCount >= minBeats && !c.containsEctopic && !c.containsSpontaneousEffort)
    .slice(-count);
  return clean.length ? clean.reduce((a, c) => a + (c[key] as number), 0) / clean.length : null;
}
