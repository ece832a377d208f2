import type { ChannelRole } from '../schemas/ingest';
import { butterSos, sosfiltfilt } from './filters';
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
  abp: { to: 'mmHg', from: { mmhg: 1, 'mm[hg]': 1, kpa: MMHG_PER_KPA, pa: MMHG_PER_KPA / 1000, cmh2o: MMHG_PER_KPA / CMH2O_PER_KPA, 'cm[h2o]': MMHG_PER_KPA / CMH2O_PER_KPA } },
  paw: { to: 'cmH2O', from: { cmh2o: 1, 'cm[h2o]': 1, mbar: 1.019716, hpa: 1.019716, kpa: CMH2O_PER_KPA, pa: CMH2O_PER_KPA / 1000, mmhg: CMH2O_PER_KPA / MMHG_PER_KPA, 'mm[hg]': CMH2O_PER_KPA / MMHG_PER_KPA } },
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
  /** Converted samples, gaps NaN. */
  raw: Float64Array;
  /** Converted samples with gaps bridged linearly (for filtering and slope rules). */
  filled: Float64Array;
  /** Zero-phase low-passed `filled` (beat values and breath detection read this). */
  smooth: Float64Array;
  report: ChannelReport;
  /** Whether any finite sample exists. */
  hasSignal: boolean;
}

function spanOf(a: number, b: number, fs: number): SampleSpan {
  return { startSample: a, endSample: b, startTime: a / fs, endTime: b / fs };
}

/** Converts units and bridges NaN runs, returning the gap spans. */
function convertAndFill(src: ArrayLike<number>, scale: number, fs: number, minGap: number, raw: Float64Array, filled: Float64Array): SampleSpan[] {
  const n = src.length;
  const gaps: SampleSpan[] = [];
  let last = -1; // last finite index
  for (let i = 0; i < n; i++) {
    const v = src[i] * scale;
    raw[i] = v;
    if (v === v && v !== Infinity && v !== -Infinity) {
      if (last < i - 1) {
        const a = last + 1;
        if (i - a >= minGap) gaps.push(spanOf(a, i, fs));
        const from = last >= 0 ? filled[last] : v;
        for (let j = a; j < i; j++) filled[j] = last >= 0 ? from + ((v - from) * (j - last)) / (i - last) : v;
      }
      filled[i] = v;
      last = i;
    } else {
      raw[i] = Number.NaN;
    }
  }
  if (last < n - 1) {
    const a = last + 1;
    if (n - a >= minGap) gaps.push(spanOf(a, n, fs));
    filled.fill(last >= 0 ? filled[last] : 0, a, n);
  }
  return gaps;
}

/** Runs whose spread stays within `tol`, at least minLen samples, skipping gaps. */
function flatRuns(raw: Float64Array, tol: number, minLen: number, fs: number): SampleSpan[] {
  const spans: SampleSpan[] = [];
  const n = raw.length;
  let start = 0;
  let lo = raw[0];
  let hi = raw[0];
  for (let i = 1; i <= n; i++) {
    const v = i < n ? raw[i] : Number.NaN;
    if (v === v && lo === lo) {
      const nlo = v < lo ? v : lo;
      const nhi = v > hi ? v : hi;
      if (nhi - nlo <= tol) {
        lo = nlo;
        hi = nhi;
        continue;
      }
    }
    if (i - start >= minLen && lo === lo) spans.push(spanOf(start, i, fs));
    start = i;
    lo = v;
    hi = v;
  }
  return spans;
}

/** Runs pinned at the window's extreme value: a saturated transducer or a clipped display scale. */
function clippedRuns(raw: Float64Array, minLen: number, fs: number, flats: SampleSpan[]): SampleSpan[] {
  let max = -Infinity;
  let min = Infinity;
  for (let i = 0; i < raw.length; i++) {
    const v = raw[i];
    if (v > max) max = v;
    if (v < min) min = v;
  }
  if (!(max > min)) return [];
  const eps = (max - min) * 1e-9;
  const hiRuns: SampleSpan[] = [];
  const loRuns: SampleSpan[] = [];
  let hiStart = -1;
  let loStart = -1;
  const inFlat = (a: number, b: number): boolean => flats.some((f) => f.startSample <= a && f.endSample >= b);
  for (let i = 0; i <= raw.length; i++) {
    const v = i < raw.length ? raw[i] : Number.NaN;
    const atHi = v >= max - eps;
    const atLo = v <= min + eps;
    if (atHi) {
      if (hiStart < 0) hiStart = i;
    } else if (hiStart >= 0) {
      if (i - hiStart >= minLen && !inFlat(hiStart, i)) hiRuns.push(spanOf(hiStart, i, fs));
      hiStart = -1;
    }
    if (atLo) {
      if (loStart < 0) loStart = i;
    } else if (loStart >= 0) {
      if (i - loStart >= minLen && !inFlat(loStart, i)) loRuns.push(spanOf(loStart, i, fs));
      loStart = -1;
    }
  }
  // One pinned run can be chance; several pinned at the same value are saturation.
  const collect = (runs: SampleSpan[]): SampleSpan[] => (runs.length >= 3 ? runs : []);
  return [...collect(hiRuns), ...collect(loRuns)].sort((a, b) => a.startSample - b.startSample);
}

/** Conditioning stage: unit conversion, gaps, flat lines, clipping, zero-phase Butterworth filtering. */
export function conditionChannel(ch: AnalysisChannel, settings: AnalysisSettings, declaredFiltering: string | null): ConditionedChannel {
  const fs = ch.sampleRate;
  if (!(fs > 0 && Number.isFinite(fs))) throw new AnalysisInputError(`${ch.role}: sample rate must be a positive number, got ${fs}`);
  const n = ch.samples.length;
  if (n < 2) throw new AnalysisInputError(`${ch.role}: needs at least 2 samples, got ${n}`);
  const { to, scale } = unitConversion(ch.role, ch.unit);
  const raw = new Float64Array(n);
  const filled = new Float64Array(n);
  const gaps = convertAndFill(ch.samples, scale, fs, Math.max(1, Math.round(settings.minGapSeconds * fs)), raw, filled);
  const gapCount = gaps.reduce((s, g) => s + g.endSample - g.startSample, 0);
  const hasSignal = gapCount < n;
  const pulsatile = ch.role === 'abp' || ch.role === 'pleth';
  let flatLines: SampleSpan[] = [];
  let clipping: SampleSpan[] = [];
  if (hasSignal) {
    const [p1, p99] = robustPercentiles(raw, [1, 99]);
    const tol = Math.max(settings.flatLineTolerance * (p99 - p1), 1e-9);
    const minFlat = pulsatile ? settings.minFlatLineSeconds : Math.max(settings.minFlatLineSeconds, 20);
    flatLines = flatRuns(raw, tol, Math.round(minFlat * fs), fs);
    if (pulsatile) clipping = clippedRuns(raw, Math.max(2, Math.round(settings.minClipSeconds * fs)), fs, flatLines);
  }
  let filter: FilterReport | null = null;
  let smooth: Float64Array = filled;
  const cutoff = ch.role === 'abp' ? settings.abpLowpassHz : ch.role === 'pleth' ? settings.plethBandpassHz[1] : settings.respirationLowpassHz;
  const order = ch.role === 'abp' ? settings.abpFilterOrder : ch.role === 'pleth' ? settings.plethFilterOrder : 2;
  if (hasSignal && cutoff < 0.45 * fs && n > 30) {
    smooth = sosfiltfilt(butterSos(order, cutoff, 'lowpass', fs), filled);
    filter = { kind: 'butterworth-lowpass', order, cutoffHz: [cutoff], zeroPhase: true };
  }
  const report: ChannelReport = {
    role: ch.role,
    sampleRate: fs,
    sampleCount: n,
    durationSeconds: n / fs,
    unitFrom: ch.unit,
    unitTo: to,
    unitScale: scale,
    gaps,
    flatLines,
    clipping,
    gapFraction: gapCount / n,
    filter,
    resampledTo: null,
    declaredFiltering,
  };
  return { role: ch.role, fs, raw, filled, smooth, report, hasSignal };
}
