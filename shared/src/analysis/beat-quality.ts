import type { BeatLandmarks } from './beats-abp';
import { FLUSH_LEVEL_MMHG, type ConditionedChannel } from './conditioning';
import { SIGNAL_LOSS_PULSE_MMHG } from './signal-loss';
import { finiteOrNull, median, overlapsAny } from './signal-utils';
import type { AnalysisSettings, Beat, BeatRejectReason, BeatSeries, BeatSource, SampleSpan } from './types';

/** Beat series plus window-level rhythm facts the verdict needs. */
export interface QualifiedBeats {
  series: BeatSeries;
  /** Fraction of beats whose interval departs from the local median (ectopic or irregular). */
  irregularFraction: number;
  ectopicCount: number;
  /** Beats rejected for noise (slope rule) or shape (template). */
  noisyCount: number;
  clippedCount: number;
  /**
   * Estimated white-noise sd of the unfiltered signal (signal unit), from the residual above the
   * low-pass cutoff scaled to the full band; null when the channel was not filtered.
   */
  noiseSd: number | null;
  /** Median pulse size (PP or pleth amplitude) of the accepted beats, or null. */
  medianPulse: number | null;
}

const add = (b: Beat, r: BeatRejectReason): void => {
  if (!b.rejectReasons.includes(r)) b.rejectReasons.push(r);
};

/**
 * Extremum value at sample i refined by a parabola through i−1, i, i+1 (sub-sample peak), so SBP
 * and DBP do not depend on where the samples happen to fall at low rates (e.g. 62.5 Hz).
 */
function vertex(y: Float64Array, i: number): number {
  if (i <= 0 || i + 1 >= y.length) return y[i];
  const a = y[i - 1];
  const b = y[i];
  const c = y[i + 1];
  const den = a - 2 * b + c;
  if (den === 0) return b;
  const off = (0.5 * (a - c)) / den;
  if (off < -1 || off > 1) return b;
  return b - 0.25 * (a - c) * off;
}

/** Reasons that mean the beat's landmarks (and so its interval) cannot be trusted. */
const ARTEFACT: BeatRejectReason[] = ['edge', 'gap', 'flat-line', 'signal-loss', 'clipped', 'noisy-slope', 'template-mismatch'];
/** Reasons that leave no measurable beat at all (used to compare kept with dropped cycles). */
const HARD: BeatRejectReason[] = ['edge', 'gap', 'flat-line', 'signal-loss', 'clipped'];
export const hasHardArtefact = (b: Beat): boolean => b.rejectReasons.some((r) => HARD.includes(r));
const hasArtefact = (b: Beat): boolean => b.rejectReasons.some((r) => ARTEFACT.includes(r));

/** Builds per-beat values (SBP/DBP/PP/MAP or amplitude/DC) from the landmarks. */
function measure(ch: ConditionedChannel, lm: BeatLandmarks, source: BeatSource, negativeSlope: number[], noise: { sum2: number; count: number }): Beat[] {
  const y = ch.smooth;
  const fs = ch.fs;
  const beats: Beat[] = [];
  const count = lm.foot.length;
  for (let k = 0; k < count; k++) {
    const f = lm.foot[k];
    const p = lm.peak[k];
    const end = k + 1 < count ? lm.foot[k + 1] : Math.min(y.length, f + (k > 0 ? f - lm.foot[k - 1] : Math.round(fs)));
    // One pass per beat: mean level (MAP or DC) and, for the Sun 2006 noise rule, the mean of the
    // negative sample-to-sample slopes of the unfiltered beat.
    let s = 0;
    let negSum = 0;
    let negCount = 0;
    const raw = ch.filled;
    // A flush's square wave is not noise: beats reaching the flush level stay out of the estimate.
    const inFlush =
      source === 'abp' &&
      (y[p] > FLUSH_LEVEL_MMHG || (ch.highRuns.length > 0 && ch.highRuns.some((r) => f >= r.startSample - 0.3 * fs && f <= r.endSample + 1.5 * fs)));
    // The residual sum runs in a local (the same additions in the same order as into `noise`).
    let sum2 = noise.sum2;
    for (let i = f; i < end; i++) {
      s += y[i];
      const r = inFlush ? 0 : raw[i] - y[i];
      sum2 += r * r;
      if (i > f) {
        const d = raw[i] - raw[i - 1];
        if (d < 0) {
          negSum += d;
          negCount++;
        }
      }
    }
    noise.sum2 = sum2;
    negativeSlope.push(negCount > 0 ? negSum / negCount : 0);
    if (!inFlush) noise.count += end - f;
    const avg = end > f ? s / (end - f) : y[f];
    const beat: Beat = {
      n: k,
      footSample: f,
      footTime: f / fs,
      peakSample: p,
      peakTime: p / fs,
      sbp: null,
      dbp: null,
      pp: null,
      map: null,
      amplitude: null,
      dc: null,
      // The foot of a beat cut by the window start is not real, so neither is the next interval.
      ibi: k > 0 && !lm.edge[k - 1] ? (f - lm.foot[k - 1]) / fs : null,
      templateCorrelation: null,
      accepted: true,
      rejectReasons: [],
    };
    if (source === 'abp') {
      beat.sbp = vertex(y, p);
      beat.dbp = vertex(y, f);
      beat.pp = beat.sbp - beat.dbp;
      beat.map = avg;
    } else {
      beat.amplitude = vertex(y, p) - vertex(y, f);
      beat.dc = avg;
    }
    if (lm.edge[k] || (k + 1 >= count && end >= y.length)) add(beat, 'edge');
    beats.push(beat);
  }
  return beats;
}

/**
 * Pulse-pressure floor of a plausible beat, mmHg: Sun 2006's fixed 20 mmHg is a rule for adult
 * monitoring populations and, in a patient whose pulse pressure is uniformly narrow (shock), rejects
 * the smallest beats of each breath, so the cycles kept are those with the least swing. The floor
 * is therefore relative to the patient's own beats: half the window's median pulse pressure, never
 * above Sun's 20 mmHg and never below the signal-loss floor.
 */
export function pulsePressureFloor(medianPp: number): number {
  const rel = 0.5 * medianPp;
  return Math.max(SIGNAL_LOSS_PULSE_MMHG, Math.min(20, rel === rel ? rel : 20));
}

/** ABP beat abnormality rules (Sun, Reisner, Mark; Computers in Cardiology 2006), PP floor relative. */
function sunRules(beats: Beat[], ch: ConditionedChannel, lm: BeatLandmarks, negativeSlope: number[]): void {
  const fs = ch.fs;
  const slopeScale = fs / 125; // the rule's −3 is per 8 ms sample at 125 Hz
  const medianPp = median(beats.filter((b) => !hasArtefact(b)).map((b) => b.pp as number));
  const ppFloor = pulsePressureFloor(medianPp);
  // Sun's 20 mmHg beat-to-beat jump is also a respiratory swing in a wide pulse with a large PPV
  // (PP 70 mmHg at PPV 30 % moves SBP by ~20 mmHg per beat at HR/RR 4): the limit grows with PP.
  const jump = Math.max(20, 0.5 * (medianPp === medianPp ? medianPp : 0));
  for (let k = 0; k < beats.length; k++) {
    const b = beats[k];
    const sbp = b.sbp as number;
    const dbp = b.dbp as number;
    const pp = b.pp as number;
    const map = b.map as number;
    if (dbp < 20) add(b, 'dbp-low');
    if (sbp > 300) add(b, 'sbp-high');
    if (map < 30 || map > 200) add(b, 'map-out-of-range');
    if (b.ibi !== null && (60 / b.ibi < 20 || 60 / b.ibi > 200)) add(b, 'hr-out-of-range');
    if (pp < ppFloor) add(b, 'pp-low');
    if (k > 0) {
      const prev = beats[k - 1];
      if (Math.abs(sbp - (prev.sbp as number)) > jump) add(b, 'sbp-jump');
      if (Math.abs(dbp - (prev.dbp as number)) > 20) add(b, 'dbp-jump');
      if (b.ibi !== null && prev.ibi !== null && Math.abs(b.ibi - prev.ibi) > 0.5) add(b, 'period-jump');
      if (Math.abs(ch.smooth[lm.onset[k]] - ch.smooth[lm.onset[k - 1]]) > 20) add(b, 'onset-jump');
    }
    // Noise: mean of the negative sample-to-sample slopes of the unfiltered beat (from measure()).
    if (negativeSlope[k] * slopeScale < -3) add(b, 'noisy-slope');
  }
}

/** Template correlation (Li & Clifford, Physiol Meas 2012): Pearson r against the window's mean beat. */
function templateCheck(beats: Beat[], y: Float64Array, fs: number, minR: number): void {
  const ibis = beats.map((b) => b.ibi).filter((v): v is number => v !== null);
  if (beats.length < 5 || ibis.length < 4) return;
  const len = Math.max(4, Math.round(0.6 * median(ibis) * fs));
  const usable = beats.filter((b) => b.footSample + len <= y.length);
  const good = usable.filter((b) => b.rejectReasons.length === 0);
  const pool = good.length >= 5 ? good : usable;
  if (pool.length < 3) return;
  // Mean template of the screened beats (Sun 2006 rules already removed gross artefact).
  const template = new Float64Array(len);
  for (const b of pool) for (let j = 0; j < len; j++) template[j] += y[b.footSample + j];
  for (let j = 0; j < len; j++) template[j] /= pool.length;
  let tm = 0;
  for (let j = 0; j < len; j++) tm += template[j];
  tm /= len;
  let tv = 0;
  for (let j = 0; j < len; j++) tv += (template[j] - tm) ** 2;
  for (const b of usable) {
    let bm = 0;
    for (let j = 0; j < len; j++) bm += y[b.footSample + j];
    bm /= len;
    let cov = 0;
    let bv = 0;
    for (let j = 0; j < len; j++) {
      const d = y[b.footSample + j] - bm;
      cov += d * (template[j] - tm);
      bv += d * d;
    }
    const r = finiteOrNull(cov / Math.sqrt(bv * tv));
    b.templateCorrelation = r;
    if (r === null || r < minR) add(b, 'template-mismatch');
  }
}

/** Ectopic and irregular beats from the intervals: departure from the median of ±5 neighbours. */
function intervalCheck(beats: Beat[], fraction: number): { irregular: number; ectopic: number } {
  let irregular = 0;
  let ectopic = 0;
  let counted = 0;
  const local = new Float64Array(11);
  for (let k = 0; k < beats.length; k++) {
    const ibi = beats[k].ibi;
    // Intervals next to artefact say nothing about the rhythm (a missed beat is not an ectopic).
    if (ibi === null || hasArtefact(beats[k]) || (k > 0 && hasArtefact(beats[k - 1]))) continue;
    let m = 0;
    for (let q = Math.max(0, k - 5); q <= Math.min(beats.length - 1, k + 5); q++) {
      const v = beats[q].ibi;
      if (v === null) continue;
      // insertion sort into the small buffer
      let j = m++;
      while (j > 0 && local[j - 1] > v) {
        local[j] = local[j - 1];
        j--;
      }
      local[j] = v;
    }
    const med = m % 2 ? local[m >> 1] : (local[(m >> 1) - 1] + local[m >> 1]) / 2;
    counted++;
    if (Math.abs(ibi - med) > fraction * med) {
      irregular++;
      add(beats[k], 'ectopic');
      ectopic++;
    }
  }
  return { irregular: counted ? irregular / counted : 0, ectopic };
}

export { hasArtefact };

/** White noise is flat in frequency: scale the residual above the cutoff to the whole band. */
function noiseEstimate(ch: ConditionedChannel, r: { sum2: number; count: number }): number | null {
  const f = ch.report.filter;
  if (!f || r.count === 0 || f.kind !== 'butterworth-lowpass') return null;
  const nyquist = ch.fs / 2;
  const above = nyquist - f.cutoffHz[0];
  if (above <= 0) return null;
  return Math.sqrt(r.sum2 / r.count) * Math.sqrt(nyquist / above);
}

/** Whether a beat lies in a flush or within 1.5 s after its release (the ringing). */
function nearFlush(runs: SampleSpan[], b: Beat): boolean {
  for (const r of runs) if (b.footTime >= r.startTime - 0.3 && b.footTime <= r.endTime + 1.5) return true;
  return false;
}

/** Beat quality stage: values, rule-based rejection with reason codes, and rhythm summary. */
export function qualifyBeats(ch: ConditionedChannel, lm: BeatLandmarks, source: BeatSource, settings: AnalysisSettings): QualifiedBeats {
  const negativeSlope: number[] = [];
  const residual = { sum2: 0, count: 0 };
  const beats = measure(ch, lm, source, negativeSlope, residual);
  const { gaps, flatLines, clipping, signalLoss } = ch.report;
  for (let k = 0; k < beats.length; k++) {
    const b = beats[k];
    const end = k + 1 < beats.length ? beats[k + 1].footSample : b.peakSample + 1;
    // The interval before the beat counts too: a beat right after a gap has no trustworthy period.
    const from = k > 0 ? beats[k - 1].footSample + 1 : b.footSample;
    if (overlapsAny(gaps, from, end)) add(b, 'gap');
    if (overlapsAny(flatLines, from, end)) add(b, 'flat-line');
    if (signalLoss.length && overlapsAny(signalLoss, from, end)) add(b, 'signal-loss');
    if (overlapsAny(clipping, b.footSample, end)) add(b, 'clipped');
  }
  if (source === 'abp') sunRules(beats, ch, lm, negativeSlope);
  else {
    const amps = beats.map((b) => b.amplitude as number).filter((v) => v > 0);
    const m = median(amps);
    for (const b of beats) {
      const a = b.amplitude as number;
      if (!(a > 0.3 * m && a < 3 * m)) add(b, 'amplitude-out-of-range');
      if (b.ibi !== null && (60 / b.ibi < 20 || 60 / b.ibi > 200)) add(b, 'hr-out-of-range');
    }
  }
  templateCheck(beats, ch.smooth, ch.fs, settings.minTemplateCorrelation);
  const rhythm = intervalCheck(beats, settings.ectopicIntervalFraction);
  // Sun 2006: a single good beat between two bad ones is bad too.
  const bad = beats.map((b) => b.rejectReasons.length > 0);
  for (let k = 1; k + 1 < beats.length; k++) if (!bad[k] && bad[k - 1] && bad[k + 1]) add(beats[k], 'between-bad-beats');
  let accepted = 0;
  let noisy = 0;
  let clipped = 0;
  for (const b of beats) {
    b.accepted = b.rejectReasons.length === 0;
    if (b.accepted) accepted++;
    // A flush (and the second after it) is flagged as such, not as noise.
    if ((b.rejectReasons.includes('noisy-slope') || b.rejectReasons.includes('template-mismatch')) && !nearFlush(ch.highRuns, b)) noisy++;
    if (b.rejectReasons.includes('clipped')) clipped++;
  }
  return {
    series: {
      source,
      sampleRate: ch.fs,
      method: source === 'abp' ? 'zong-2003-slope-sum-function' : 'elgendi-2013-two-moving-averages',
      beats,
      acceptedCount: accepted,
      rejectedCount: beats.length - accepted,
    },
    irregularFraction: rhythm.irregular,
    // Only the arterial residual above 16 Hz is noise; the pleth's 8 Hz cut still holds pulse detail.
    noiseSd: source === 'abp' ? noiseEstimate(ch, residual) : null,
    medianPulse: accepted ? median(beats.filter((b) => b.accepted).map((b) => (source === 'abp' ? b.pp : b.amplitude) as number)) : null,
    ectopicCount: rhythm.ectopic,
    noisyCount: noisy,
    clippedCount: clipped,
  };
}
