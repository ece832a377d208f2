import { describe, expect, it } from 'vitest';
import type { AnalysisResult } from '@ebbgate/shared/analysis';
import type { TruthCycle } from '@ebbgate/shared/synthetic';
import { checkWindow } from './ground-truth';
import { SCENARIOS } from './catalogue';

// The checker must be able to fail: each kind of disagreement is reported.
const truth: TruthCycle[] = [
  { startTime: 12, endTime: 16.3, ppv: 18, spv: 9, deltaPop: 18, beatCount: 6, containsEctopic: false, containsSpontaneousEffort: false },
];
const result = (over: Partial<AnalysisResult>): Pick<AnalysisResult, 'verdict' | 'flags' | 'indexVerdicts' | 'cycles' | 'indices'> =>
  ({
    verdict: 'valid',
    flags: [],
    indexVerdicts: {},
    indices: { ppv: { value: 18.2 } },
    cycles: [{ startTime: 2.1, usedInWindow: true, ppv: 18.4 }],
    ...over,
  }) as never;

describe('scenario ground-truth check', () => {
  const fluid = SCENARIOS['fluid-responsive'].expect;
  it('passes a window that matches (cycle at 10 + 2.1 s matches the truth cycle at 12 s)', () => {
    expect(checkWindow(result({}), fluid, truth, 10).problems).toEqual([]);
  });
  it('reports a PPV off by more than 1 point, a wrong verdict and a flag that must be absent', () => {
    const r = checkWindow(
      result({
        verdict: 'questionable',
        flags: [{ code: 'noise-motion', severity: 'warning', reason: '' }],
        cycles: [{ startTime: 2.1, usedInWindow: true, ppv: 19.5 }] as never,
      }),
      fluid,
      truth,
      10,
    );
    expect(r.problems).toEqual(['verdict questionable, expected valid', 'flag noise-motion present', 'cycle at 12.1 s: PPV 19.50 vs truth 18.00']);
  });
  it('reports a missing flag and a flag with the wrong direction', () => {
    const af = SCENARIOS['atrial-fibrillation'].expect;
    expect(checkWindow(result({ verdict: 'not-valid' }), af, truth, 10).problems).toEqual(['flag irregular-rhythm missing']);
    const wrong = checkWindow(
      result({ verdict: 'not-valid', flags: [{ code: 'irregular-rhythm', severity: 'critical', direction: 'false-low', reason: '' }] }),
      af,
      truth,
      10,
    );
    expect(wrong.problems).toEqual(['flag irregular-rhythm says false-low, expected false-high']);
  });
});
