import type { AnalysisResult } from '@ebbgate/shared/analysis';
import type { TruthCycle } from '@ebbgate/shared/synthetic';
import type { ScenarioExpectation } from './types';

/** The engine's tolerance on clean windows: PPV within ±1 percentage point (analysis issue, test (c)). */
export const PPV_TOLERANCE_POINTS = 1;

export interface WindowCheck {
  ok: boolean;
  problems: string[];
  /** Engine cycles used in the window value that matched a truth cycle, with both values. */
  cycles: { engine: number; truth: number }[];
}

/**
 * Compares one analysed window with what the scenario put in: the verdict, the flags that must
 * and must not be there, the per-index verdicts, and (for clean scenarios) each used cycle's PPV
 * against the truth cycle it corresponds to (matched by start time within 0.5 s).
 */
export function checkWindow(
  result: Pick<AnalysisResult, 'verdict' | 'flags' | 'indexVerdicts' | 'cycles' | 'indices'>,
  expect: ScenarioExpectation,
  truth: TruthCycle[],
  windowOffset: number,
): WindowCheck {
  const problems: string[] = [];
  const codes = new Set(result.flags.map((f) => f.code));
  if (expect.verdict && result.verdict !== expect.verdict) problems.push(`verdict ${result.verdict}, expected ${expect.verdict}`);
  for (const f of expect.flags) if (!codes.has(f)) problems.push(`flag ${f} missing`);
  for (const f of expect.absentFlags) if (codes.has(f)) problems.push(`flag ${f} present`);
  for (const [code, direction] of Object.entries(expect.flagDirections ?? {})) {
    const f = result.flags.find((x) => x.code === code);
    if (f && f.direction !== direction) problems.push(`flag ${code} says ${f.direction ?? 'no direction'}, expected ${direction}`);
  }
  for (const [index, v] of Object.entries(expect.indexVerdicts ?? {})) {
    const got = result.indexVerdicts[index as keyof typeof result.indexVerdicts];
    if (got !== v) problems.push(`${index} verdict ${got ?? result.verdict}, expected ${v}`);
  }
  const cycles: { engine: number; truth: number }[] = [];
  if (expect.ppvRecovered) {
    if (result.indices.ppv.value === null) problems.push('PPV not computed');
    for (const c of result.cycles.filter((x) => x.usedInWindow && x.ppv !== null)) {
      const t = truth.find((x) => Math.abs(x.startTime - (windowOffset + c.startTime)) < 0.5);
      if (!t || t.ppv === null) continue;
      cycles.push({ engine: c.ppv!, truth: t.ppv });
      if (Math.abs(c.ppv! - t.ppv) > PPV_TOLERANCE_POINTS)
        problems.push(`cycle at ${(windowOffset + c.startTime).toFixed(1)} s: PPV ${c.ppv!.toFixed(2)} vs truth ${t.ppv.toFixed(2)}`);
    }
    if (cycles.length === 0) problems.push('no used cycle matched a truth cycle');
  }
  return { ok: problems.length === 0, problems, cycles };
}
