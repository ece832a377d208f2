import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { butter, butterSos, filtfilt, lfilterZi, sosfiltfilt, type FilterType } from './filters';

// Reference: SciPy (Debian python3-scipy) vectors from tests/reference/scipy/generate.py.
interface FilterCase {
  order: number;
  cutoff: number | [number, number];
  btype: FilterType;
  fs: number;
  b: number[];
  a: number[];
  lfilterZi: number[];
  x: number[];
  filtfilt: number[];
  sosfiltfilt: number[];
}
const fixture = JSON.parse(readFileSync(new URL('../../../tests/reference/fixtures/scipy-filters.json', import.meta.url), 'utf8')) as { cases: FilterCase[] };

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

describe('Butterworth design and zero-phase filtering against scipy.signal', () => {
  it('has the SciPy fixture cases', () => {
    expect(fixture.cases.length).toBeGreaterThanOrEqual(8);
  });
  for (const c of fixture.cases) {
    const label = `order ${c.order} ${c.btype} ${JSON.stringify(c.cutoff)} Hz at ${c.fs} Hz`;
    it(`butter() matches scipy.signal.butter coefficients: ${label}`, () => {
      const { b, a } = butter(c.order, c.cutoff, c.btype, c.fs);
      expect(b.length).toBe(c.b.length);
      expect(a.length).toBe(c.a.length);
      const scale = Math.max(...c.a.map(Math.abs));
      expect(maxAbsDiff(a, c.a) / scale).toBeLessThan(1e-9);
      expect(maxAbsDiff(b, c.b) / Math.max(...c.b.map(Math.abs))).toBeLessThan(1e-7);
    });
    it(`lfilterZi() matches scipy.signal.lfilter_zi: ${label}`, () => {
      const zi = lfilterZi(c.b, c.a);
      expect(maxAbsDiff(zi, c.lfilterZi)).toBeLessThan(1e-6 * Math.max(1, ...c.lfilterZi.map(Math.abs)));
    });
    it(`filtfilt() matches scipy.signal.filtfilt: ${label}`, () => {
      const y = filtfilt(c.b, c.a, c.x);
      expect(y.length).toBe(c.x.length);
      // (b, a) of order ≥ 8 is ill-conditioned, so rounding differs from SciPy's: compare relative
      // to the signal's size (1e-6 of ~100 mmHg = 0.0001 mmHg).
      expect(maxAbsDiff(y, c.filtfilt)).toBeLessThan(1e-6 * Math.max(...c.x.map(Math.abs)));
    });
    it(`sosfiltfilt() with butterSos matches scipy.signal.sosfiltfilt: ${label}`, () => {
      const y = sosfiltfilt(butterSos(c.order, c.cutoff, c.btype, c.fs), c.x);
      expect(maxAbsDiff(y, c.sosfiltfilt)).toBeLessThan(1e-8);
    });
  }
  it('rejects a cutoff at or above Nyquist with a clear error', () => {
    expect(() => butter(2, 70, 'lowpass', 125)).toThrow(/Nyquist/);
  });
});
