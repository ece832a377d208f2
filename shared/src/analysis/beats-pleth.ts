import { cachedButterSos, sosfiltfilt } from './filters';
import type { BeatLandmarks } from './beats-abp';
import { argMax, argMin } from './signal-utils';

/**
 * Pleth systolic peaks by two event-related moving averages (Elgendi et al., PLoS One 2013):
 * band-pass 0.5–8 Hz Butterworth (zero phase), clip negatives, square; MA_peak over W1 = 111 ms,
 * MA_beat over W2 = 667 ms; blocks where MA_peak > MA_beat + β·mean(y²), β = 0.02, wider than W1;
 * the peak is the maximum in each block. The trough (foot) is the minimum of the low-passed pleth
 * between the previous peak and this one.
 */
export function detectPlethBeats(smooth: Float64Array, filled: Float64Array, fs: number, band: [number, number], order: number): BeatLandmarks {
  const n = filled.length;
  const empty = { foot: new Int32Array(0), peak: new Int32Array(0), onset: new Int32Array(0), edge: new Uint8Array(0) };
  const hi = Math.min(band[1], 0.45 * fs);
  const minLen = 3 * (2 * order + 1) + 1;
  if (n <= minLen || band[0] >= hi) return empty;
  const bp = sosfiltfilt(cachedButterSos(order, [band[0], hi], 'bandpass', fs), filled);
  const sq = new Float64Array(n);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const v = bp[i] > 0 ? bp[i] * bp[i] : 0;
    sq[i] = v;
    total += v;
  }
  const alpha = 0.02 * (total / n);
  const w1 = Math.max(1, Math.round(0.111 * fs));
  const w2 = Math.max(1, Math.round(0.667 * fs));
  const maPeak = centredMovingAverage(sq, w1);
  const maBeat = centredMovingAverage(sq, w2);
  const foot: number[] = [];
  const peak: number[] = [];
  const onset: number[] = [];
  const edge: number[] = [];
  let start = -1;
  let lastPeak = -1;
  for (let i = 0; i <= n; i++) {
    const inBlock = i < n && maPeak[i] > maBeat[i] + alpha;
    if (inBlock && start < 0) start = i;
    if (!inBlock && start >= 0) {
      if (i - start >= w1) {
        // Peak on the low-passed pleth near the band-passed maximum (zero-phase keeps them aligned).
        const pb = argMax(bp, start, i);
        const a = Math.max(0, pb - Math.round(0.05 * fs));
        const b = Math.min(n, pb + Math.round(0.05 * fs) + 1);
        const p = argMax(smooth, a, b);
        if (p > lastPeak + Math.round(0.25 * fs) || lastPeak < 0) {
          const fStart = lastPeak >= 0 ? lastPeak + 1 : Math.max(0, p - Math.round(0.6 * fs));
          const f = argMin(smooth, fStart, p + 1);
          foot.push(f);
          peak.push(p);
          onset.push(start);
          edge.push(f === 0 || (lastPeak < 0 && f === fStart && fStart === 0) || i >= n ? 1 : 0);
          lastPeak = p;
        }
      }
      start = -1;
    }
  }
  return { foot: Int32Array.from(foot), peak: Int32Array.from(peak), onset: Int32Array.from(onset), edge: Uint8Array.from(edge) };
}

/** Centred moving average with a window of w samples (shrinking at the edges). */
function centredMovingAverage(x: Float64Array, w: number): Float64Array {
  const n = x.length;
  const prefix = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) prefix[i + 1] = prefix[i] + x[i];
  const out = new Float64Array(n);
  const half = w >> 1;
  for (let i = 0; i < n; i++) {
    const a = i - half < 0 ? 0 : i - half;
    const b = i - half + w > n ? n : i - half + w;
    out[i] = (prefix[b] - prefix[a]) / (b - a);
  }
  return out;
}
