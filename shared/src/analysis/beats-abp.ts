import { argMax, argMin } from './signal-utils';

/** Raw beat landmarks on one channel, as sample indices. */
export interface BeatLandmarks {
  foot: Int32Array;
  peak: Int32Array;
  /** Sample where the detector placed the onset (SSF onset for ABP, block start for pleth). */
  onset: Int32Array;
  /** Beats cut by the window edges. */
  edge: Uint8Array;
}

/**
 * Arterial beat onsets by the slope sum function (Zong, Heldt, Moody, Mark; Computers in
 * Cardiology 2003): SSF(n) = Σ max(0, Δy) over 128 ms; adaptive threshold starting at 3 × mean SSF
 * of the first 8 s, moved 1/10 of the way to each detected SSF maximum, detection at 1/3 of it;
 * onset where the SSF rise fades; 250 ms refractory period. Windows scale with fs instead of
 * resampling to 125 Hz. After 2.5 s without a beat the threshold halves, but never below a floor
 * (the open-source reference implementation, PhysioNet's wabp, likewise steps down to a minimum
 * threshold): SSF_MIN_MMHG, an upstroke of 3 mmHg within 128 ms, so noise on a lost line (a
 * fraction of a mmHg per sample) never reads as beats. The foot (DBP) is the pressure minimum just before the onset; the peak
 * (SBP) the maximum of the following 300 ms.
 */
/** Lowest detection threshold of the slope sum, mmHg (rise within the 128 ms window). */
export const SSF_MIN_MMHG = 3;

export function detectArterialBeats(y: Float64Array, fs: number): BeatLandmarks {
  const n = y.length;
  const w = Math.max(2, Math.round(0.128 * fs));
  const ssf = new Float64Array(n);
  // Running sum of the positive slopes over the last w samples: the slope w samples back leaves it
  // (recomputed from y, the same value a ring buffer would hold).
  let acc = 0;
  for (let i = 1; i < n; i++) {
    const d = y[i] - y[i - 1];
    const up = d > 0 ? d : 0;
    const dOut = i > w ? y[i - w] - y[i - w - 1] : 0;
    acc += up - (dOut > 0 ? dOut : 0);
    ssf[i] = acc > 0 ? acc : 0;
  }
  const initLen = Math.min(n, Math.round(8 * fs));
  let sum = 0;
  for (let i = 0; i < initLen; i++) sum += ssf[i];
  let base = (3 * sum) / Math.max(1, initLen);
  const refractory = Math.round(0.25 * fs);
  const searchMax = Math.round(0.15 * fs);
  const back = Math.round(0.15 * fs);
  const peakWin = Math.round(0.3 * fs);
  const quiet = Math.round(2.5 * fs);
  const foot: number[] = [];
  const peak: number[] = [];
  const onset: number[] = [];
  const edge: number[] = [];
  let lastDetect = -refractory;
  let lastPeak = -1;
  let i = 1;
  // Detection at a third of the running base, never below the floor; recomputed when base moves.
  const threshold = (b: number): number => (b / 3 > SSF_MIN_MMHG ? b / 3 : SSF_MIN_MMHG);
  let thr = threshold(base);
  while (i < n) {
    if (ssf[i] > thr) {
      const mEnd = Math.min(n, i + searchMax);
      const m = argMax(ssf, i, mEnd);
      const ssfMax = ssf[m];
      base += (ssfMax - base) / 10;
      thr = threshold(base);
      // Onset: walk back while the SSF is still rising by more than 1 % of its maximum.
      let j = i;
      const stop = Math.max(1, i - back);
      while (j > stop && ssf[j] - ssf[j - 1] > ssfMax * 0.01 && ssf[j - 1] > ssfMax * 0.02) j--;
      const fStart = Math.max(lastPeak + 1, j - Math.round(0.08 * fs), 0);
      const f = argMin(y, fStart, Math.min(n, i + 1));
      const pEnd = Math.min(n, i + peakWin);
      const p = argMax(y, i, pEnd);
      foot.push(f);
      onset.push(j);
      peak.push(p);
      edge.push(f <= 1 || fStart === 0 || i + peakWin > n ? 1 : 0);
      lastDetect = i;
      lastPeak = p;
      i = Math.max(i + refractory, p + 1);
      continue;
    }
    // Nothing for 2.5 s (gap, flat line, a sudden drop in pulse size): relax the threshold.
    if (i - lastDetect > quiet) {
      base = Math.max(base * 0.5, 3 * SSF_MIN_MMHG);
      thr = threshold(base);
      lastDetect = i;
    }
    i++;
  }
  return { foot: Int32Array.from(foot), peak: Int32Array.from(peak), onset: Int32Array.from(onset), edge: Uint8Array.from(edge) };
}
