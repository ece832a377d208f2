import type { ChannelRole } from '../schemas/ingest';

/**
 * A disturbance added to a synthetic window. Times are seconds from the window start; amplitudes
 * marked "fraction" are relative to the mean pulse amplitude (pulse pressure or pleth AC).
 */
export type Disturbance =
  /** White Gaussian noise, sd = level × pulse amplitude, on abp and pleth (or the roles given). */
  | { kind: 'noise'; level: number; roles?: ChannelRole[] }
  /** Slow sinusoidal baseline drift (amplitude fraction, frequency Hz) on abp and pleth. */
  | { kind: 'baseline-wander'; amplitude: number; frequencyHz: number }
  /** Premature beats with a compensatory pause (coupling 0.6 of the interval, pulse 55 %). */
  | { kind: 'ectopic'; count: number }
  /** Atrial-fibrillation-like irregular intervals: each interval × (1 ± variability), uniform. */
  | { kind: 'irregular-rhythm'; variability: number }
  /** Arterial pressure clipped at DBP + level × PP (level 0.85 clips most systolic peaks). */
  | { kind: 'clipping'; level: number }
  /** Over-damped arterial line: two causal first-order low-pass stages at cutoffHz. */
  | { kind: 'damping'; cutoffHz: number }
  /** Arterial pressure stuck at a constant value (the sample at `start` unless `value`). */
  | { kind: 'flat-line'; start: number; duration: number; value?: number }
  /** Missing samples (NaN) on the roles given (default all channels). */
  | { kind: 'gap'; start: number; duration: number; roles?: ChannelRole[] }
  /** Patient efforts: inspiratory dips in airway pressure and extra triggered breaths. */
  | { kind: 'spontaneous-breaths'; count: number }
  /** Motion artefact: large smoothed random swings on abp and pleth (amplitude fraction). */
  | { kind: 'motion'; start: number; duration: number; amplitude: number }
  /** Fast-flush of the arterial line: plateau near 300 mmHg, then ringing (or, with a `catheter`, a square wave the catheter model rings on). */
  | { kind: 'flush'; start: number; duration: number }
  /**
   * Catheter–transducer as a second-order system (Gardner, Anesthesiology 1981):
   * x'' + 2ζωn x' + ωn² x = ωn² u, applied to the arterial pressure (after any flush square wave).
   */
  | { kind: 'catheter'; naturalFrequencyHz: number; dampingRatio: number };

export type DisturbanceKind = Disturbance['kind'];

/** What to generate. Only seed, heart rate, respiratory rate and PPV are required. */
export interface SyntheticSpec {
  seed: number;
  /** Window length, s (default 60). */
  durationSeconds?: number;
  /** Samples per second for every channel (default 125). */
  sampleRate?: number;
  /** Heart rate, /min. */
  heartRate: number;
  /** Ventilator rate, /min. */
  respiratoryRate: number;
  /** Nominal PPV, %: the continuous respiratory swing of pulse pressure. */
  ppv: number;
  /** Nominal ΔPOP, % (default = ppv). */
  deltaPop?: number;
  /** Channels to produce (default abp and paw). */
  channels?: ChannelRole[];
  /** Mean diastolic pressure, mmHg (default 70). */
  meanDbp?: number;
  /** Mean pulse pressure, mmHg (default 45). */
  meanPp?: number;
  /** Pleth DC level in raw units (default 1000). */
  plethDc?: number;
  /** Perfusion index put into the raw pleth, % (default 2). */
  perfusionIndex?: number;
  /** `auto-scaled` normalises the pleth like a monitor display output (DC lost). */
  plethScaling?: 'raw' | 'auto-scaled';
  /** Inspiratory : expiratory time as a fraction (default 0.5, i.e. 1:2). */
  ieRatio?: number;
  peep?: number;
  /** Peak airway pressure, cmH2O (ignored when tidalVolumeMl and complianceMlPerCmH2O are given). */
  peakPressure?: number;
  /** Delivered tidal volume, mL: with compliance, the plateau is PEEP + Vt / C. */
  tidalVolumeMl?: number;
  /** Respiratory-system compliance, mL/cmH2O. */
  complianceMlPerCmH2O?: number;
  /** End-inspiratory pause, s (default 0: no plateau). */
  inspiratoryPauseSeconds?: number;
  etco2?: number;
  /** Heart-rate variability of a regular rhythm, fraction (default 0.01). */
  hrVariability?: number;
  disturbances?: Disturbance[];
}

/** One generated channel; structurally an `AnalysisChannel` of the engine. */
export interface SyntheticChannel {
  role: ChannelRole;
  sampleRate: number;
  unit: string;
  samples: Float64Array;
}

export interface TruthArterialBeat {
  footTime: number;
  peakTime: number;
  sbp: number;
  dbp: number;
  pp: number;
  ectopic: boolean;
}

export interface TruthPlethBeat {
  footTime: number;
  peakTime: number;
  amplitude: number;
  dc: number;
  ectopic: boolean;
}

/** A ventilator cycle as put in, with its values computed from the beats put in. */
export interface TruthCycle {
  startTime: number;
  endTime: number;
  /** From the pulse pressures of the arterial beats whose systolic peak lies in the cycle. */
  ppv: number | null;
  spv: number | null;
  /** From the pleth amplitudes of the pleth beats whose peak lies in the cycle. */
  deltaPop: number | null;
  beatCount: number;
  containsEctopic: boolean;
  containsSpontaneousEffort: boolean;
}

export interface SyntheticTruth {
  spec: SyntheticSpec;
  /** Mean heart rate of the beats put in, /min. */
  heartRate: number;
  respiratoryRate: number;
  nominalPpv: number;
  nominalDeltaPop: number;
  /** Perfusion index of the raw pleth (null when auto-scaled). */
  perfusionIndex: number | null;
  beats: { abp: TruthArterialBeat[]; pleth: TruthPlethBeat[] };
  cycles: TruthCycle[];
  /** Times of the spontaneous efforts added, s. */
  spontaneousEfforts: number[];
  /** Mean PPV over every complete cycle put in (whatever an engine would keep), %. */
  ppvAllCycles: number | null;
  /** Mean PPV over the last three clean cycles put in (no ectopic beat, no effort), %. */
  ppvLastCleanCycles: number | null;
  /** Airway pressures put in, cmH2O (plateau null without a pause). */
  airway: { peep: number; peak: number; plateau: number | null; drivingPressure: number | null; compliance: number | null };
  disturbances: Disturbance[];
}

export interface SyntheticWindow {
  channels: SyntheticChannel[];
  truth: SyntheticTruth;
}
