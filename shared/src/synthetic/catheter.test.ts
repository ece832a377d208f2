import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { findFlushTests } from '../analysis/index';
import { catheterResponse } from './index';

// Reference: scipy.signal.lsim of wn²/(s² + 2ζwn s + wn²) on a fast-flush square wave
// (tests/reference/scipy/catheter.py, Debian python3-scipy). The tests' second-order catheter model
// (Gardner, Anesthesiology 1981) must agree with it, and the engine's flush test must read fn and ζ
// from SciPy's own signal, not only from the project's generator.
const ref = JSON.parse(readFileSync(new URL('../../../tests/reference/fixtures/scipy-catheter.json', import.meta.url), 'utf8')) as {
  fs: number;
  input: number[];
  cases: { fn: number; zeta: number; y: number[] }[];
};

describe('second-order catheter model against SciPy (scipy.signal.lsim)', () => {
  for (const c of ref.cases) {
    it(`fn ${c.fn} Hz, ζ ${c.zeta}: same response within 0.01 mmHg`, () => {
      const y = catheterResponse(Float64Array.from(ref.input), ref.fs, c.fn, c.zeta);
      expect(y.length).toBe(c.y.length);
      let worst = 0;
      for (let i = 0; i < y.length; i++) worst = Math.max(worst, Math.abs(y[i]! - c.y[i]!));
      expect(worst).toBeLessThan(0.01);
    });
    it(`fn ${c.fn} Hz, ζ ${c.zeta}: the flush test read on SciPy's signal`, () => {
      const [t] = findFlushTests(Float64Array.from(c.y), ref.fs);
      expect(t).toBeDefined();
      if (c.zeta >= 1) {
        expect(t!.region).toBe('over-damped');
        expect(t!.dampingRatio).toBeNull();
        return;
      }
      expect(t!.naturalFrequencyHz).not.toBeNull();
      expect(t!.dampingRatio).not.toBeNull();
      expect(Math.abs(t!.naturalFrequencyHz! / c.fn - 1)).toBeLessThanOrEqual(0.05);
      expect(Math.abs(t!.dampingRatio! / c.zeta - 1)).toBeLessThanOrEqual(0.05);
    });
  }
});
