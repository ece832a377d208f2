import type { SampleSpan } from './types';

/**
 * Pulse pressure below which an arterial trace holds no pulse, mmHg (common practice: even in
 * profound shock a pulsatile arterial trace swings more than this; below it the "beats" are noise
 * on a lost or closed line).
 */
export const SIGNAL_LOSS_PULSE_MMHG = 5;

/**
 * Spans of at least `minSeconds` where the smoothed arterial pressure swings less than
 * SIGNAL_LOSS_PULSE_MMHG within every 1.5 s: a flat line even when noise keeps it from being flat
 * to the sample. Block minima and maxima (0.25 s) keep this to one pass over the samples.
 */
export function findSignalLoss(y: Float64Array, fs: number, minSeconds: number): SampleSpan[] {
  const block = Math.max(1, Math.round(0.25 * fs));
  const nb = Math.floor(y.length / block);
  if (nb < 6) return [];
  const lo = new Float64Array(nb);
  const hi = new Float64Array(nb);
  // The trace is low-passed (16 Hz): reading every `stride`-th sample (~60 per second) cannot miss
  // a pulse-sized swing and halves the work at 125 Hz.
  const stride = Math.max(1, Math.floor(fs / 60));
  for (let k = 0; k < nb; k++) {
    let a = Infinity;
    let b = -Infinity;
    for (let i = k * block, e = i + block; i < e; i += stride) {
      const v = y[i];
      if (v < a) a = v;
      if (v > b) b = v;
    }
    lo[k] = a;
    hi[k] = b;
  }
  const width = 6;
  const quiet = new Uint8Array(nb);
  for (let k = 0; k + width <= nb; k++) {
    let a = Infinity;
    let b = -Infinity;
    for (let q = k; q < k + width; q++) {
      if (lo[q] < a) a = lo[q];
      if (hi[q] > b) b = hi[q];
    }
    if (b - a < SIGNAL_LOSS_PULSE_MMHG) for (let q = k; q < k + width; q++) quiet[q] = 1;
  }
  const spans: SampleSpan[] = [];
  const minBlocks = Math.ceil((minSeconds * fs) / block);
  for (let k = 0; k < nb;) {
    if (!quiet[k]) {
      k++;
      continue;
    }
    let e = k;
    while (e < nb && quiet[e]) e++;
    if (e - k >= minBlocks) {
      const a = k * block;
      const b = e === nb ? y.length : e * block;
      spans.push({ startSample: a, endSample: b, startTime: a / fs, endTime: b / fs });
    }
    k = e;
  }
  return spans;
}
