import type { ChannelRole } from '../schemas/ingest';
import { cachedButterSos, filtfiltJob, runFiltfiltJobs, type FiltfiltJob } from './filters';
import { findSignalLoss } from './signal-loss';
import { robustPercentiles } from './signal-utils';
import type { AnalysisChannel, AnalysisSettings, ChannelReport, FilterReport, SampleSpan } from './types';

/** Thrown for input the engine cannot analyse (unknown unit, empty channel, bad rate). */
export class AnalysisInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'AnalysisInputError';
  }
}

const MMHG_PER_KPA = 7.500617;
const CMH2O_PER_KPA = 10.19716;

/** Target unit per role and the factors that convert accepted units into it. */
const UNIT_TABLE: Record<Exclude<ChannelRole, 'pleth'>, { to: string; from: Record<string, number> }> = {
  abp: {
    to: 'mmHg',
    from: { mmhg: 1, 'mm[hg]': 1, kpa: MMHG_PER_KPA, pa: MMHG_PER_KPA / 1000, cmh2o: MMHG_PER_KPA / CMH2O_PER_KPA, 'cm[h2o]': MMHG_PER_KPA / CMH2O_PER_KPA },
  },
  paw: {
    to: 'cmH2O',
    from: {
      cmh2o: 1,
      'cm[h2o]': 1,
      mbar: 1.019716,
      hpa: 1.019716,
      kpa: CMH2O_PER_KPA,
      pa: CMH2O_PER_KPA / 1000,
      mmhg: CMH2O_PER_KPA / MMHG_PER_KPA,
      'mm[hg]': CMH2O_PER_KPA / MMHG_PER_KPA,
    },
  },
  // CO2 as a percentage is converted at 760 mmHg total pressure (common practice approximation).
  co2: { to: 'mmHg', from: { mmhg: 1, 'mm[hg]': 1, kpa: MMHG_PER_KPA, pa: MMHG_PER_KPA / 1000, '%': 7.6 } },
};

/** Resolves the conversion of a channel's unit; throws AnalysisInputError for an unknown one. */
export function unitConversion(role: ChannelRole, unit: string): { to: string; scale: number } {
  if (role === 'pleth') return { to: unit, scale: 1 };
  const entry = UNIT_TABLE[role];
  const scale = entry.from[unit.trim().toLowerCase()];
  if (scale === undefined) {
    throw new AnalysisInputError(`unit "${unit}" is not understood for ${role}; expected one of ${Object.keys(entry.from).join(', ')}`);
  }
  return { to: entry.to, scale };
}

/** A channel after conditioning, with the arrays later stages read. */
export interface ConditionedChannel {
  role: ChannelRole;
  fs: number;
  /** Converted samples with gaps bridged linearly (for filtering and slope rules). */
  filled: Float64Array;
  /** Zero-phase low-passed `filled` (beat values and breath detection read this). */
  smooth: Float64Array;
  report: ChannelReport;
  /** Whether any finite sample exists. */
  hasSignal: boolean;
  /** Longest run of samples above FLUSH_LEVEL_MMHG (arterial only; 0 otherwise). */
  longestHighRun: number;
  /** Runs above FLUSH_LEVEL_MMHG of at least 0.15 s (flush or zeroing), arterial only. */
  highRuns: SampleSpan[];
}

/** Arterial pressure above this is a flush or zeroing plateau, not a pulse (Gardner 1981; common practice). */
export const FLUSH_LEVEL_MMHG = 250;

function spanOf(a: number, b: number, fs: number): SampleSpan {
  return { startSample: a, endSample: b, startTime: a / fs, endTime: b / fs };
}

interface ScanOptions {
  minGap: number;
  flatTol: number;
  minFlat: number;
  minClip: number;
  /** Level above which the longest run is measured (flush plateau), or Infinity. */
  highLevel: number;
}

interface ScanResult {
  gaps: SampleSpan[];
  flatLines: SampleSpan[];
  clipping: SampleSpan[];
  longestHighRun: number;
  highRuns: SampleSpan[];
}

/**
 * Flat-line runs: greedy runs of finite samples whose spread stays within `tol`, a run ending at the
 * first sample that would widen it beyond `tol` (or at a missing sample), kept when at least
 * `minFlat` long.
 */
function flatRuns(src: ArrayLike<number>, scale: number, fs: number, tol: number, minFlat: number): SampleSpan[] {
  const n = src.length;
  const flatLines: SampleSpan[] = [];
  let fStart = 0;
  let fLo = Number.NaN;
  let fHi = Number.NaN;
  for (let i = 0; i < n; i++) {
    const v = src[i] * scale;
    if (v - v === 0) {
      if (fLo === fLo) {
        const nlo = v < fLo ? v : fLo;
        const nhi = v > fHi ? v : fHi;
        if (nhi - nlo <= tol) {
          fLo = nlo;
          fHi = nhi;
        } else {
          if (i - fStart >= minFlat) flatLines.push(spanOf(fStart, i, fs));
          fStart = i;
          fLo = v;
          fHi = v;
        }
      } else {
        fStart = i;
        fLo = v;
        fHi = v;
      }
    } else {
      if (fLo === fLo && i - fStart >= minFlat) flatLines.push(spanOf(fStart, i, fs));
      fLo = Number.NaN;
    }
  }
  if (fLo === fLo && n - fStart >= minFlat) flatLines.push(spanOf(fStart, n, fs));
  return flatLines;
}

/**
 * One pass over the channel: unit conversion, gap bridging (linear), runs of identical samples
 * (clipping candidates), the longest run above highLevel, and the spread of each block of
 * ⌊minFlat / 2⌋ samples. A flat-line run of minFlat samples contains a whole block, so it needs a
 * block of finite samples with spread within flatTol: only then are the runs themselves followed
 * (flatRuns, a second read). Following them sample by sample costs a mispredicted branch on most
 * samples of a noisy trace, which made this the slowest loop of the engine.
 */
function scan(src: ArrayLike<number>, scale: number, fs: number, o: ScanOptions, filled: Float64Array): ScanResult {
  const n = src.length;
  const trackEqual = o.minClip <= n;
  const trackHigh = o.highLevel !== Infinity;
  const gaps: SampleSpan[] = [];
  const equalRuns: { a: number; b: number; v: number }[] = [];
  let last = -1;
  let min = Infinity;
  let max = -Infinity;
  const block = o.minFlat >> 1;
  let blockEnd = block - 1;
  let bLo = Infinity;
  let bHi = -Infinity;
  let quietBlock = block < 1;
  let eStart = 0;
  let eVal = Number.NaN;
  let high = 0;
  let longestHigh = 0;
  const highRuns: SampleSpan[] = [];
  const minHigh = Math.round(0.15 * fs);
  for (let i = 0; i < n; i++) {
    const v = src[i] * scale;
    if (v - v === 0) {
      if (last < i - 1) {
        const a = last + 1;
        if (i - a >= o.minGap) gaps.push(spanOf(a, i, fs));
        const from = last >= 0 ? filled[last] : v;
        for (let j = a; j < i; j++) filled[j] = last >= 0 ? from + ((v - from) * (j - last)) / (i - last) : v;
      }
      filled[i] = v;
      last = i;
      if (v < min) min = v;
      if (v > max) max = v;
      if (v < bLo) bLo = v;
      if (v > bHi) bHi = v;
      if (trackEqual && v !== eVal) {
        if (eVal === eVal && i - eStart >= o.minClip) equalRuns.push({ a: eStart, b: i, v: eVal });
        eStart = i;
        eVal = v;
      }
      if (trackHigh) {
        if (v > o.highLevel) {
          high++;
          if (high > longestHigh) longestHigh = high;
        } else {
          if (high >= minHigh) highRuns.push(spanOf(i - high, i, fs));
          high = 0;
        }
      }
    } else {
      bHi = Infinity; // a block with a missing sample holds no flat-line run
      if (eVal === eVal && i - eStart >= o.minClip) equalRuns.push({ a: eStart, b: i, v: eVal });
      eVal = Number.NaN;
      if (high >= minHigh) highRuns.push(spanOf(i - high, i, fs));
      high = 0;
    }
    if (i === blockEnd) {
      if (bHi - bLo <= o.flatTol) quietBlock = true;
      bLo = Infinity;
      bHi = -Infinity;
      blockEnd += block;
    }
  }
  const flatLines = quietBlock ? flatRuns(src, scale, fs, o.flatTol, o.minFlat) : [];
  if (eVal === eVal && n - eStart >= o.minClip) equalRuns.push({ a: eStart, b: n, v: eVal });
  if (last < n - 1) {
    const a = last + 1;
    if (n - a >= o.minGap) gaps.push(spanOf(a, n, fs));
    filled.fill(last >= 0 ? filled[last] : 0, a, n);
  }
  // Clipping: several runs pinned at the window's extreme value (one can be chance), outside flat lines.
  const pinned = (target: number): SampleSpan[] => {
    const runs = equalRuns.filter((r) => r.v === target && !flatLines.some((f) => f.startSample <= r.a && f.endSample >= r.b));
    return runs.length >= 3 ? runs.map((r) => spanOf(r.a, r.b, fs)) : [];
  };
  const clipping = max > min ? [...pinned(max), ...pinned(min)].sort((x, y) => x.startSample - y.startSample) : [];
  if (high >= minHigh) highRuns.push(spanOf(n - high, n, fs));
  return { gaps, flatLines, clipping, longestHighRun: longestHigh, highRuns };
}

/** A channel after its single read (scan), with its low-pass prepared but not yet run. */
export interface ScannedChannel {
  ch: AnalysisChannel;
  to: string;
  scale: number;
  filled: Float64Array;
  found: ScanResult;
  gapCount: number;
  hasSignal: boolean;
  declaredFiltering: string | null;
  lowpass: { job: FiltfiltJob; report: FilterReport } | null;
}

/**
 * First half of conditioning: checks (sample rate, length, unit: AnalysisInputError), unit
 * conversion, gaps, flat lines, clipping, and the zero-phase Butterworth low-pass prepared.
 */
export function scanChannel(ch: AnalysisChannel, settings: AnalysisSettings, declaredFiltering: string | null): ScannedChannel {
  const fs = ch.sampleRate;
  if (!(fs > 0 && Number.isFinite(fs))) throw new AnalysisInputError(`${ch.role}: sample rate must be a positive number, got ${fs}`);
  const n = ch.samples.length;
  if (n < 2) throw new AnalysisInputError(`${ch.role}: needs at least 2 samples, got ${n}`);
  const { to, scale } = unitConversion(ch.role, ch.unit);
  const filled = new Float64Array(n);
  const pulsatile = ch.role === 'abp' || ch.role === 'pleth';
  // Scale for the flat-line tolerance from a subsample (converted), before the single full pass.
  const [p1, p99] = robustPercentiles(ch.samples, [1, 99]).map((v) => v * scale);
  const minFlat = pulsatile ? settings.minFlatLineSeconds : Math.max(settings.minFlatLineSeconds, 20);
  const found = scan(
    ch.samples,
    scale,
    fs,
    {
      minGap: Math.max(1, Math.round(settings.minGapSeconds * fs)),
      flatTol: Math.max(settings.flatLineTolerance * Math.abs(p99 - p1), 1e-9),
      minFlat: Math.round(minFlat * fs),
      minClip: pulsatile ? Math.max(2, Math.round(settings.minClipSeconds * fs)) : n + 1,
      highLevel: ch.role === 'abp' ? FLUSH_LEVEL_MMHG : Infinity,
    },
    filled,
  );
  const gapCount = found.gaps.reduce((s, g) => s + g.endSample - g.startSample, 0);
  const hasSignal = gapCount < n;
  let lowpass: ScannedChannel['lowpass'] = null;
  const cutoff = ch.role === 'abp' ? settings.abpLowpassHz : ch.role === 'pleth' ? settings.plethBandpassHz[1] : settings.respirationLowpassHz;
  const order = ch.role === 'abp' ? settings.abpFilterOrder : ch.role === 'pleth' ? settings.plethFilterOrder : 2;
  if (hasSignal && cutoff < 0.45 * fs && n > 30) {
    lowpass = {
      job: filtfiltJob(cachedButterSos(order, cutoff, 'lowpass', fs), filled),
      report: { kind: 'butterworth-lowpass', order, cutoffHz: [cutoff], zeroPhase: true },
    };
  }
  return { ch, to, scale, filled, found, gapCount, hasSignal, declaredFiltering, lowpass };
}

/**
 * Second half of conditioning: the low-passes of all channels of a window run together (two
 * channels of equal length share one loop, see runFiltfiltJobs), then signal loss is sought on the
 * smoothed arterial pressure.
 */
export function filterChannels(scanned: ScannedChannel[], settings: AnalysisSettings): ConditionedChannel[] {
  const withFilter = scanned.filter((s) => s.lowpass !== null);
  const smoothed = runFiltfiltJobs(withFilter.map((s) => (s.lowpass as NonNullable<ScannedChannel['lowpass']>).job));
  return scanned.map((s) => {
    const k = withFilter.indexOf(s);
    return finishChannel(s, k >= 0 ? smoothed[k] : s.filled, settings);
  });
}

function finishChannel(s: ScannedChannel, smooth: Float64Array, settings: AnalysisSettings): ConditionedChannel {
  const { ch, found, gapCount, hasSignal } = s;
  const fs = ch.sampleRate;
  const n = ch.samples.length;
  const report: ChannelReport = {
    role: ch.role,
    sampleRate: fs,
    sampleCount: n,
    durationSeconds: n / fs,
    unitFrom: ch.unit,
    unitTo: s.to,
    unitScale: s.scale,
    gaps: found.gaps,
    flatLines: found.flatLines,
    clipping: found.clipping,
    signalLoss: ch.role === 'abp' && hasSignal ? findSignalLoss(smooth, fs, settings.minFlatLineSeconds) : [],
    gapFraction: gapCount / n,
    filter: s.lowpass ? s.lowpass.report : null,
    resampledTo: null,
    declaredFiltering: s.declaredFiltering,
  };
  return { role: ch.role, fs, filled: s.filled, smooth, report, hasSignal, longestHighRun: found.longestHighRun, highRuns: found.highRuns };
}

/** Conditioning stage for one channel: unit conversion, gaps, flat lines, clipping, zero-phase Butterworth filtering. */
export function conditionChannel(ch: AnalysisChannel, settings: AnalysisSettings, declaredFiltering: string | null): ConditionedChannel {
  return filterChannels([scanChannel(ch, settings, declaredFiltering)], settings)[0];
}
