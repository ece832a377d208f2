/**
 * Public contract of the analysis engine (`@ebbgate/shared/analysis`).
 *
 * Everything in {@link AnalysisResult} is plain JSON: arrays, numbers, strings, booleans and null
 * (never NaN, never typed arrays), so it can be stored, posted and compared bit for bit.
 * Backward compatibility: fields are only ever added, never renamed or removed.
 */
import type { AnalysisContext, ChannelRole, ChecklistContext } from '../schemas/ingest';

export type { AnalysisContext, ChannelRole, ChecklistContext };

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
  /**
   * Checklist items set on the bed by a person (audited by the gateway). The batch's own value
   * wins where both give one; flags say which source they came from.
   */
  bedContext?: ChecklistContext;
  /** ISO 8601 time of the first sample; echoed in the result, never used in the computation. */
  startTime?: string;
  /**
   * Ventilator settings that changed inside the window, in words ("tidal volume 429 → 572 mL"),
   * from the contexts of the batches it spans (see `ventilatorSettingChanges`). `context` is the
   * latest batch's.
   */
  settingChanges?: string[];
}

/** Which index a decision band or a per-index verdict belongs to. */
export type IndexName = 'ppv' | 'spv' | 'deltaPop' | 'perfusionIndex' | 'heartRate' | 'respiratoryRate' | 'hrRrRatio';

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
  /** Share of respiratory cycles dropped above which the window is flagged (cycles-dropped). */
  maxDroppedCycleFraction: number;
  /** Kept and dropped cycles differing by more than this (points of PPV/ΔPOP) is selection bias. */
  selectionBiasPoints: number;
  /** Tidal volume challenge: rise of PPV, points, at or above which the test is positive (Myatra 2017: 3.5). */
  challengeThresholdPoints: number;
  /** Tidal volume challenge: smallest step, mL/kg PBW (Myatra 2017 used 6 → 8, i.e. 2). */
  challengeMinStepMlPerKg: number;
  /** Tidal volume challenge: time the higher volume must be held before PPV is read, s (Myatra 2017: one minute). */
  challengeMinHoldSeconds: number;
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
  /** Arterial only: spans where the pressure swings less than a pulse (lost line, even with noise). */
  signalLoss: SampleSpan[];
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
  | 'signal-loss' // inside a span where the arterial pressure swings less than a pulse
  | 'clipped'
  | 'dbp-low' // Sun 2006: DBP < 20 mmHg
  | 'sbp-high' // Sun 2006: SBP > 300 mmHg
  | 'map-out-of-range' // Sun 2006: MAP < 30 or > 200 mmHg
  | 'hr-out-of-range' // Sun 2006: HR < 20 or > 200 /min
  | 'pp-low' // PP below max(Sun 2006's 20 mmHg × fraction, 40 % of the window's median PP): see beat-quality.ts
  | 'sbp-jump' // Sun 2006: beat-to-beat SBP change > 20 mmHg (here max(20, half the median PP))
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
  /**
   * Foot, sample index on the source channel: for ABP the pressure minimum just before the slope
   * sum function's onset (its value is the DBP); for pleth the trough before the peak.
   */
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
  /**
   * Variation of the primary pulse over every beat in the cycle that is free of artefact (edge, gap,
   * flat line, signal loss, clipping, noise, shape), usable or not: compares kept with dropped cycles.
   */
  variationAllBeats: number | null;
}

export interface RespirationReport {
  source: CycleSource | null;
  /** Sample rate the cycle sample indices refer to. */
  sampleRate: number | null;
  /** Where the respiratory rate comes from: `measured` from the cycles, `set` (the set ventilator rate) when inferred. */
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
/**
 * Likely direction of the error: `either` when the literature or the model says it can go both
 * ways, `unknown` when the direction could not be decided (and the flag says so).
 */
export type ErrorDirection = 'false-high' | 'false-low' | 'either' | 'unknown';

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
  | 'pleth-processing-unknown'
  /** Ventilation mode unknown or not given: controlled ventilation cannot be assumed. */
  | 'ventilation-unconfirmed'
  /** Ventilator settings changed inside the window: no steady state. */
  | 'settings-changed'
  /** The cycles kept differ systematically from the cycles dropped (pulse size or swing). */
  | 'selection-bias'
  /** More than a set share of the respiratory cycles was dropped. */
  | 'cycles-dropped'
  /** Arterial line under-damped (ringing): from a flush test or the beat shape. */
  | 'arterial-underdamped'
  /** Pulse pressure of the "beats" below a physiological floor for a sustained span: signal lost. */
  | 'signal-loss'
  /** Checklist context (batch context or bed settings). */
  | 'open-chest'
  | 'intra-abdominal-pressure-high'
  | 'right-ventricular-dysfunction'
  | 'extracorporeal-support'
  | 'prone-position'
  | 'paediatric-patient'
  /** Compliance computed with the peak pressure in place of a plateau (no end-inspiratory pause). */
  | 'compliance-estimated';

export interface Flag {
  code: FlagCode;
  severity: FlagSeverity;
  /** Likely direction of the error where the literature says (for the window's primary index). */
  direction?: ErrorDirection;
  /** Direction per index where it differs between indices (e.g. damping: SPV low, PPV unknown). */
  directionByIndex?: Partial<Record<IndexName, ErrorDirection>>;
  reason: string;
  /** Channel or index the flag is about, e.g. `abp`, `pleth`, `ppv`. */
  source?: string;
  /** For checklist flags: where the fact came from (`batch` context or the `bed` settings). */
  contextSource?: ContextSource;
  /** Published source of the rule, e.g. `Michard et al., Am J Respir Crit Care Med 2000`. */
  reference?: string;
}

/** Where a checklist fact came from: the batch's own context or the bed settings a person set. */
export type ContextSource = 'batch' | 'bed';

/**
 * Region of the Gardner chart (Gardner, Anesthesiology 1981;54:227) a flush test falls in:
 * natural frequency against damping ratio.
 */
export type GardnerRegion = 'optimal' | 'adequate' | 'over-damped' | 'under-damped' | 'unacceptable';

/** One fast-flush test found in the arterial pressure, with the line's dynamic response. */
export interface FlushTestResult {
  /** Time the flush valve was released (end of the square wave), s from window start. */
  releaseTime: number;
  /** Natural frequency from the period of the oscillations after release, Hz. */
  naturalFrequencyHz: number | null;
  /** Damping ratio from the amplitude ratio of successive oscillations (Gardner 1981). */
  dampingRatio: number | null;
  /** Ratio of the second to the first overshoot amplitude, or null when there is no ringing. */
  amplitudeRatio: number | null;
  /** Number of oscillation peaks measured. */
  oscillations: number;
  region: GardnerRegion;
  /** The Gardner chart region in words, for the console. */
  regionText: string;
}

/** Over- or under-damping estimated from beat shape alone (no flush in the window). */
export type DampingEstimate = 'over-damped' | 'under-damped' | 'adequate' | 'unknown';

/** Respiratory mechanics from airway pressure and the tidal volume in context. */
export interface RespiratoryMechanics {
  peepCmH2O: number | null;
  peakCmH2O: number | null;
  plateauCmH2O: number | null;
  /** How the plateau was found: an end-inspiratory pause, or the peak used in its place. */
  plateauSource: 'end-inspiratory-pause' | 'estimated-from-peak' | null;
  /** Plateau − PEEP, cmH2O. */
  drivingPressureCmH2O: number | null;
  /** Vt / (plateau − PEEP), mL/cmH2O (or the value given in context when no airway pressure). */
  complianceMlPerCmH2O: number | null;
  complianceSource: 'airway-pressure' | 'context' | null;
  /** Median airway-pressure swing (peak − PEEP) per breath, cmH2O. */
  pressureSwingCmH2O: number | null;
}

/** How the cycles kept compare with the cycles dropped. */
export interface SelectionReport {
  cyclesTotal: number;
  cyclesDropped: number;
  /** Share of complete cycles dropped. */
  droppedFraction: number;
  /** Mean PPV of all complete cycles with a computable value (kept or not), %. */
  ppvAllCycles: number | null;
  /** Mean pulse pressure of the beats in kept minus in dropped cycles, mmHg. */
  pulsePressureDifference: number | null;
}

/** Verdict of a tidal volume challenge. */
export type ChallengeVerdict = 'positive' | 'negative' | 'cannot-be-judged';

/** Stable reason codes when a tidal volume challenge cannot be judged. */
export type ChallengeReason =
  | 'no-step' // no rise of tidal volume found
  | 'step-too-small' // the step is under the minimum (mL/kg PBW, or share of Vt without PBW)
  | 'step-too-short' // the higher volume was not held for the minimum time
  | 'baseline-not-low' // baseline tidal volume not near 6 mL/kg PBW
  | 'airway-pressure-not-risen' // airway-pressure swing did not rise with the step
  | 'baseline-not-valid' // no valid PPV window at the low volume
  | 'challenge-not-valid' // no valid PPV window at the higher volume
  | 'irregular-rhythm'
  | 'spontaneous-effort'
  | 'ventilation-unconfirmed';

/**
 * Tidal volume challenge (Myatra et al., Crit Care Med 2017, from memory): in patients ventilated
 * at 6 mL/kg PBW, tidal volume raised to 8 mL/kg for one minute; an absolute rise of PPV of about
 * 3.5 points or more predicted fluid responsiveness.
 */
export interface TidalVolumeChallengeResult {
  engineVersion: string;
  /** PPV of the last valid window at the low volume, %. */
  baselinePpv: number | null;
  /** PPV after (at least) one minute at the higher volume, %. */
  challengePpv: number | null;
  /** challengePpv − baselinePpv, percentage points. */
  deltaPpv: number | null;
  /** Rise in points at or above which the verdict is positive. */
  threshold: number;
  thresholdSource: string;
  verdict: ChallengeVerdict;
  /** Why the challenge cannot be judged (empty when judged), codes and words. */
  reasons: ChallengeReason[];
  reasonTexts: string[];
  baselineTidalVolumeMl: number | null;
  challengeTidalVolumeMl: number | null;
  baselineMlPerKg: number | null;
  challengeMlPerKg: number | null;
  /** When the step happened, s from the start of the first segment. */
  stepAtSeconds: number | null;
  /** How long the higher volume was held in the input, s. */
  challengeHeldSeconds: number | null;
  baselineVerdict: Verdict | null;
  challengeVerdict: Verdict | null;
  /** Airway-pressure swing before and after the step, cmH2O, when airway pressure is present. */
  baselinePressureSwingCmH2O: number | null;
  challengePressureSwingCmH2O: number | null;
  /** Flag codes of the two windows, for the reader. */
  baselineFlags: FlagCode[];
  challengeFlags: FlagCode[];
  cautions: string[];
}

/**
 * A whole tidal volume challenge for the engine: consecutive segments (each an analysis window
 * with its own context), earliest first, or one window with context changes inside it.
 */
export interface ChallengeInput {
  segments: AnalysisInput[];
}

/** A context change inside one batch: from `atSeconds` on, `context` applies. */
export interface ContextChange {
  atSeconds: number;
  context: AnalysisContext;
}

export interface ArterialLineReport {
  /** Fraction of accepted beats showing a dicrotic notch. */
  notchFraction: number | null;
  /** Over-damping suspected (from the flush test when there is one, else from beat shape). */
  dampingSuspected: boolean;
  /** Under-damping (ringing) suspected. */
  underDampingSuspected: boolean;
  flushSuspected: boolean;
  /** Fast-flush tests found in the window (Gardner 1981), earliest first. */
  flushTests: FlushTestResult[];
  /** Damping from beat shape alone (used when no flush test could be measured). */
  dampingEstimate: DampingEstimate;
  /** Median upstroke (foot to peak) duration of clean beats, s. */
  upstrokeSeconds: number | null;
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
  /** Compliance and driving pressure, when airway pressure and tidal volume allow. */
  respiratoryMechanics: RespiratoryMechanics | null;
  /** Kept against dropped cycles. */
  selection: SelectionReport;
}
