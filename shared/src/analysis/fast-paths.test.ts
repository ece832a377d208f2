import { describe, expect, it } from 'vitest';
import { createPrng } from '../synthetic/prng';
import { butterSos, filtfiltJob, runFiltfiltJobs, sosfiltfilt } from './filters';
import { median } from './signal-utils';

// The speed paths must give exactly what the plain definitions give. References: the textbook
// median of a fully sorted copy (written out here, independent of the engine's quickselect), and
// sosfiltfilt on one signal at a time (itself checked against SciPy in filters.test.ts).

/** Median by the definition: sort ascending, middle value or mean of the two middle values. */
function sortedMedian(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

describe('median by quickselect', () => {
  it('equals the median of a sorted copy for odd and even counts, ties and repeated values', () => {
    const rng = createPrng(7);
    for (let trial = 0; trial < 500; trial++) {
      const n = 1 + (trial % 97);
      // Rounded to 0.5 so that ties are common.
      const values = Array.from({ length: n }, () => Math.round(rng.next() * 40) / 2 - 10);
      expect(median(values), `trial ${trial}`).toBe(sortedMedian(values));
    }
  });

  it('leaves its input untouched and gives NaN for no values', () => {
    const values = [5, 1, 4, 2, 3];
    expect(median(values)).toBe(3);
    expect(values).toEqual([5, 1, 4, 2, 3]);
    expect(median([])).toBeNaN();
  });
});

describe('two channels low-passed in one loop', () => {
  it('give the same samples, bit for bit, as filtering each channel alone', () => {
    const rng = createPrng(11);
    const n = 3000;
    const a = Float64Array.from({ length: n }, (_, i) => 80 + 20 * Math.sin(i / 7) + rng.next());
    const b = Float64Array.from({ length: n }, (_, i) => 5 + 10 * Math.max(0, Math.sin(i / 60)) + 0.1 * rng.next());
    const c = Float64Array.from({ length: 2000 }, (_, i) => 1000 + 30 * Math.sin(i / 11));
    const lowA = butterSos(2, 16, 'lowpass', 125);
    const lowB = butterSos(2, 4, 'lowpass', 125);
    const band = butterSos(3, [0.5, 8], 'bandpass', 125);
    // The low-passes of a and b pair up (equal padded length); the band-pass (three sections, a
    // longer padding) and the shorter c run alone, as does the last low-pass of b.
    const out = runFiltfiltJobs([filtfiltJob(lowA, a), filtfiltJob(lowB, b), filtfiltJob(band, a), filtfiltJob(lowB, c), filtfiltJob(lowA, b)]);
    const expected = [sosfiltfilt(lowA, a), sosfiltfilt(lowB, b), sosfiltfilt(band, a), sosfiltfilt(lowB, c), sosfiltfilt(lowA, b)];
    expect(out.map((y) => Array.from(y))).toEqual(expected.map((y) => Array.from(y)));
  });
});
