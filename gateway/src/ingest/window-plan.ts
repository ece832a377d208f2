/**
 * Sliding analysis windows: [s, s + window) for s = next, next + step, … while the window is
 * fully covered by received data. Pure, so ingest can plan in its own transaction.
 */
export function plannedWindowStarts(nextStartMs: number, coveredUntilMs: number, windowMs: number, stepMs: number, max = 1000): number[] {
  const out: number[] = [];
  for (let s = nextStartMs; s + windowMs <= coveredUntilMs && out.length < max; s += stepMs) out.push(s);
  return out;
}

export type ContinuityKind = 'first' | 'contiguous' | 'gap' | 'overlap';

/** Gap (positive) or overlap (negative) of a batch start against where the stream ended, ms. */
export function continuityOf(previousEndMs: number | null, startMs: number, toleranceMs: number): { continuity: ContinuityKind; continuityMs: number | null } {
  if (previousEndMs === null) return { continuity: 'first', continuityMs: null };
  const d = startMs - previousEndMs;
  if (Math.abs(d) <= toleranceMs) return { continuity: 'contiguous', continuityMs: d };
  return { continuity: d > 0 ? 'gap' : 'overlap', continuityMs: d };
}
