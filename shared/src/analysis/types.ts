/**
 * Public contract of the analysis engine (`@ebbgate/shared/analysis`).
 *
 * Everything in {@link AnalysisResult} is plain JSON: arrays, numbers, strings, booleans and null
 * (never NaN, never typed arrays), so it can be stored, posted and compared bit for bit.
 * Backward compatibility: fields are only ever added, never renamed or removed.
 */
import type { AnalysisContext, ChannelRole } from '../schemas/ingest';

export type { AnalysisContext, ChannelRole };

/** One synchronised channel of the analysis window; gaps are NaN samples. */
export interface AnalysisChannel {
  role: ChannelRole;
  /** Samples per second. */
  sampleRate: number;
  /** Unit as received, e.g. `mmHg`, `kPa`, `cmH2O`, `mbar`, `%`, `mmHg` for CO2, `1` for pleth. */
  unit: string;
  samples: Float64Array | Float32Array;
}

export interface AnalysisInput {
  channels: AnalysisChannel[];
  context?: AnalysisContext;
  /** ISO 8601 time of the first sample; echoed in the result, never used in the computation. */
  startTime?: string;
}

/** Which index a decision band or a per-index verdict belongs to. */
export type IndexName =
  | 'ppv'
  | 'spv'
  | 'deltaPop'
  | 'perfusionIndex'
  | 'heartRate'
  | 'respiratoryRate'
  | 'hrRrRatio';

/** A decision band: a range of an index with the published source that proposed it. */
export interface DecisionBand {
  /** Stable identifier, e.g. `ppv-grey-zone`. */
  id: string;
  index: IndexName;
  /** Inclusive lower bound, null for open-ended. */
  lower: number | null;
  /** Exclusive upper bound, null for open-ended. */
  upper: number | null;
  unit: string;
  /** Plain-language label shown beside the value; never an order to treat. */
  label: string;
  /** Where the band comes from (paper, figures, whether recalled from memory). */
  source: string;
}

/** Tunable parameters of the engine. Every field has a default in `DEFAULT_SETTINGS`. */
export interface AnalysisSettings {
  /** Consecutive usable respiratory cycles averaged into the window value (common practice: 3). */
  cyclesToAverage: number;
  /** Zero-phase Butterworth low-pass applied to arterial pressure before beat detection. */
  abpLowpassHz: number;
  abpFilterOrder: number;
  /** Zero-phase Butterworth band-pass for pleth peak detection (Elgendi 2013: 0.5–8 Hz). */
  plethBandpassHz: [number, number];
  plethFilterOrder: number;
  /** Low-pass applied to airway pressure / CO2 before breath detection. */
  respirationLowpassHz: number;
  /** HR/RR at or below this gives too few beats per breath (De Backer 2009: 3.6). */
  minHrRrRatio: number;
  /** Tidal volume below this (mL/kg predicted body weight) makes PPV unreliable (8). */
  minTidalVolumeMlPerKg: number;
  /** Respiratory-system compliance at or below this is "low" (mL/cmH2O; 30, from memory). */
  lowComplianceMlPerCmH2O: number;
  /** Minimum template correlation of an accepted beat (Li & Clifford 2012, ~0.86 from memory). */
  minTemplateCorrelation: number;
  /** A beat whose interval departs from the local median by more than this fraction is ectopic. */
  ectopicIntervalFraction: number;
  /** Fraction of beats with irregular intervals above which the rhythm is called irregular. */
  irregularRhythmFraction: number;
  /** A cycle whose length departs from the median cycle length by more than this is irregular. */
  cycleLengthTolerance: number;
  /** Shortest run of NaN samples reported as a gap, seconds. */
  minGapSeconds: number;
  /** Shortest run of (nearly) constant samples reported as a flat line, seconds. */
  minFlatLineSeconds: number;
  /** Samples within this distance of the window's extreme count as a flat line (signal unit). */
  flatLineTolerance: number;
  /** Shortest run pinned at the channel maximum/minimum reported as clipping, seconds. */
  minClipSeconds: number;
  /** Index values outside this range are artefacts (common practice: PPV 0–50 %). */
  plausibleMaxPercent: number;
  /** Decision bands shown with the values. */
  bands: DecisionBand[];
}

/** A run of samples [startSample, endSample) on one channel, with times in s from window start. */
export interface SampleSpan {
  startSample: number;
  endSample: number;
  startTime: number;
  endTime: number;
}

export interface FilterReport {
  kind: 'butterworth-lowpass' | 'butterworth-bandpass';
  order: number;
  cutoffHz: number[];
  /** Forward–backward filtering (scipy.signal.filtfilt convention). */
  zeroPhase: boolean;
}

/** What the conditioning stage did to one channel. */
export interface ChannelReport {
  role: ChannelRole;
  sampleRate: number;
  sampleCount: number;
  durationSeconds: number;
  unitFrom: string;
  unitTo: string;
  /** Multiplier applied to convert unitFrom → unitTo. */
  unitScale: number;
  gaps: SampleSpan[];
  flatLines: SampleSpan[];
  clipping: SampleSpan[];
  /** Fraction of samples that are NaN. */
  gapFraction: number;
  filter: FilterReport | null;
  /** Rate a detector resampled to (e.g. 125 Hz for the slope sum function), or null. */
  resampledTo: number | null;
  /** Free text the monitor profile declared about the device's own filtering, or null. */
  declaredFiltering: string | null;
}

/** Stable reason codes for rejecting a beat. */
export type BeatRejectReason =
  | 'edge' // beat cut by the window start/end
  | 'gap' // beat overlaps a gap (NaN)
  | 'flat-line'
  | 'clipped'
  | 'dbp-low' // Sun 2006: DBP < 20 mmHg
  | 'sbp-high' // Sun 2006: SBP > 300 mmHg
  | 'map-out-of-range' // Sun 2006: MAP < 30 or > 200 mmHg
  | 'hr-out-of-range' // Sun 2006: HR < 20 or > 200 /min
  | 'pp-low' // Sun 2006: PP < 20 mmHg
  | 'sbp-jump' // Sun 2006: beat-to-beat SBP change > 20 mmHg
  | 'dbp-jump' // Sun 2006: beat-to-beat DBP change > 20 mmHg
  | 'period-jump' // Sun 2006: beat period change > 0.5 s
  | 'onset-jump' // Sun 2006: onset pressure change > 20 mmHg
  | 'noisy-slope' // Sun 2006: mean negative slope < -3 mmHg/sample
  | 'between-bad-beats' // Sun 2006: a single good beat between two bad ones
  | 'template-mismatch' // Li & Clifford 2012: correlation with the window template too low
  | 'ectopic' // interval departs from the local median (premature or compensatory)
  | 'amplitude-out-of-range'; // pleth: amplitude implausible against the window median

export interface Beat {
  /** Ordinal of the beat within its series. */
  n: number;
  /** Onset (ABP, slope sum function) or foot/trough (pleth), sample index on the source channel. */
  footSample: number;
  footTime: number;
  peakSample: number;
  peakTime: number;
  /** Arterial: systolic, diastolic (at the foot), pulse and mean pressure, mmHg; null for pleth. */
  sbp: number | null;
  dbp: number | null;
  pp: number | null;
  map: number | null;
  /** Pleth: peak-to-trough amplitude (POP) and DC level, in pleth units; null for arterial. */
  amplitude: number | null;
  dc: number | null;
  /** Interval from the previous beat's foot, s; null for the first beat. */
  ibi: number | null;
  /** Pearson correlation with the window's median beat template, or null if not computed. */
  templateCorrelation: number | null;
  accepted: boolean;
  rejectReasons: BeatRejectReason[];
}

export type BeatSource = 'abp' | 'pleth';

export interface BeatSeries {
  source: BeatSource;
  sampleRate: number;
  /** Detector used, e.g. `zong-2003-ssf`, `elgendi-2013-two-moving-averages`. */
  method: string;
  beats: Beat[];
  acceptedCount: number;
  rejectedCount: number;
}

export type CycleSource = 'paw' | 'co2' | 'inferred';

/** Stable reason codes for not using a respiratory cycle. */
export type CycleRejectReason =
  | 'partial' // cut by the window edge
  | 'too-few-beats' // fewer accepted beats than HR/RR requires
  | 'ectopic-beat'
  | 'rejected-beat'
  | 'irregular-length'
  | 'gap'
  | 'spontaneous-effort'
  | 'value-implausible';

export interface RespiratoryCycle {
  n: number;
  source: CycleSource;
  /** Sample indices on the respiration channel (or the beat channel for inferred cycles). */
  startSample: number;
  endSample: number;
  startTime: number;
  endTime: number;
  /** Indices into `beats.abp.beats` / `beats.pleth.beats` whose peak falls in the cycle. */
  abpBeatIndices: number[];
  plethBeatIndices: number[];
  usable: boolean;
  rejectReasons: CycleRejectReason[];
  /** Per-cycle values; null when not computable for this cycle. */
  ppv: number | null;
  spv: number | null;
  deltaPop: number | null;
  ppMax: number | null;
  ppMin: number | null;
  sbpMax: number | null;
  sbpMin: number | null;
  popMax: number | null;
  popMin: number | null;
  /** Whether this cycle is among those averaged into the window value. */
  usedInWindow: boolean;
}

export interface RespirationReport {
  source: CycleSource | null;
  /** Sample rate the cycle sample indices refer to. */
  sampleRate: number | null;
  /** Respiratory rate from the cycles, /min, or the set rate when inferred. */
  rateSource: 'measured' | 'set' | null;
  /** Why no cycles could be found, if so. */
  reason: string | null;
}

export interface IndexValue {
  value: number | null;
  unit: string;
  /** Cycle-to-cycle spread (max − min of the cycle values averaged), or null. */
  spread: number | null;
  cyclesUsed: number;
  notComputableReason?: string;
}

export interface Indices {
  ppv: IndexValue;
  spv: IndexValue;
  deltaPop: IndexValue;
  perfusionIndex: IndexValue;
  heartRate: IndexValue;
  respiratoryRate: IndexValue;
  hrRrRatio: IndexValue;
}

export type Verdict = 'valid' | 'questionable' | 'not-valid';
export type FlagSeverity = 'info' | 'warning' | 'critical';
export type ErrorDirection = 'false-high' | 'false-low';

/** Stable flag codes. */
export type FlagCode =
  | 'irregular-rhythm'
  | 'ectopic-beats'
  | 'too-few-cycles'
  | 'low-hr-rr-ratio'
  | 'spontaneous-breathing'
  | 'ventilation-not-controlled'
  | 'tidal-volume-low'
  | 'tidal-volume-unknown'
  | 'compliance-low'
  | 'arterial-damped'
  | 'arterial-flush'
  | 'clipping'
  | 'flat-line'
  | 'gap'
  | 'noise-motion'
  | 'vasopressor-running'
  | 'finger-probe'
  | 'pleth-auto-scaled'
  | 'monitor-filtering-declared'
  | 'respiration-inferred'
  | 'no-respiration-source'
  | 'no-pulse-source'
  | 'value-implausible'
  /** Pleth fails window-level quality rules (Orphanidou et al., IEEE JBHI 2015). */
  | 'pleth-quality-low'
  /** Pleth present but whether it is raw or auto-scaled was not declared. */
  | 'pleth-processing-unknown';

export interface Flag {
  code: FlagCode;
  severity: FlagSeverity;
  /** Likely direction of the error where the literature says. */
  direction?: ErrorDirection;
  reason: string;
  /** Channel or index the flag is about, e.g. `abp`, `pleth`, `ppv`. */
  source?: string;
}

export interface ArterialLineReport {
  /** Fraction of accepted beats showing a dicrotic notch. */
  notchFraction: number | null;
  dampingSuspected: boolean;
  flushSuspected: boolean;
}

export interface AnalysisResult {
  engineVersion: string;
  settings: AnalysisSettings;
  startTime: string | null;
  durationSeconds: number;
  channels: ChannelReport[];
  beats: { abp: BeatSeries | null; pleth: BeatSeries | null };
  respiration: RespirationReport;
  cycles: RespiratoryCycle[];
  indices: Indices;
  verdict: Verdict;
  /** Verdict per index where it differs from the window verdict; rates (HR, RR, HR/RR) are judged as measurements, not by the validity conditions of the dynamic indices. */
  indexVerdicts: Partial<Record<IndexName, Verdict>>;
  flags: Flag[];
  arterialLine: ArterialLineReport | null;
  cautions: string[];
  bands: DecisionBand[];
  /** Predicted body weight (Devine/ARDSNet), kg, when height and sex are known. */
  predictedBodyWeightKg: number | null;
  /** Tidal volume per kg PBW, when known. */
  tidalVolumeMlPerKg: number | null;
}
