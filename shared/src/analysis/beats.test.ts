import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { detectArterialBeats } from './beats-abp';
import { detectPlethBeats } from './beats-pleth';
import { conditionChannel } from './conditioning';
import { DEFAULT_SETTINGS } from './settings';

// Reference: scipy.signal.find_peaks (Debian python3-scipy) on pulse trains made by
// tests/reference/scipy/generate.py, independent of the engine's own synthetic generator.
interface PeakCase {
  name: string;
  fs: number;
  x: number[];
  findPeaks: { distance: number; prominence: number; peaks: number[] };
}
const fixture = JSON.parse(readFileSync(new URL('../../../tests/reference/fixtures/scipy-peaks.json', import.meta.url), 'utf8')) as { cases: PeakCase[] };

/** Matches detected to reference positions within tol samples; returns sensitivity and positive predictivity. */
function match(detected: ArrayLike<number>, reference: number[], tol: number, from: number, to: number) {
  const det = Array.from(detected).filter((p) => p >= from && p < to);
  const ref = reference.filter((p) => p >= from && p < to);
  let tp = 0;
  const used = new Set<number>();
  for (const r of ref) {
    const hit = det.findIndex((d, i) => !used.has(i) && Math.abs(d - r) <= tol);
    if (hit >= 0) {
      used.add(hit);
      tp++;
    }
  }
  return { se: tp / ref.length, ppv: tp / det.length, n: ref.length };
}

describe('beat detection against scipy.signal.find_peaks', () => {
  for (const c of fixture.cases) {
    it(`${c.name}: every systolic peak SciPy finds is found within tolerance, and nothing else (Zong 2003 / Elgendi 2013)`, () => {
      const role = c.name.startsWith('pleth') ? 'pleth' : 'abp';
      const ch = conditionChannel({ role, sampleRate: c.fs, unit: role === 'abp' ? 'mmHg' : 'au', samples: Float64Array.from(c.x) }, DEFAULT_SETTINGS, null);
      const lm =
        role === 'abp'
          ? detectArterialBeats(ch.smooth, c.fs)
          : detectPlethBeats(ch.smooth, ch.filled, c.fs, DEFAULT_SETTINGS.plethBandpassHz, DEFAULT_SETTINGS.plethFilterOrder);
      // Skip the first and last second, where a pulse can be cut by the window.
      // Tolerance 20 ms for the sharp arterial peak; 40 ms for the broad pleth crest, where SciPy
      // takes the noisy raw maximum and the detector the low-passed one.
      const tol = Math.round((role === 'abp' ? 0.02 : 0.04) * c.fs);
      const m = match(lm.peak, c.findPeaks.peaks, tol, c.fs, c.x.length - c.fs);
      expect(m.n).toBeGreaterThan(40);
      expect(m.se).toBeGreaterThanOrEqual(0.995);
      expect(m.ppv).toBeGreaterThanOrEqual(0.995);
    });
  }
});
