import type { ChannelRole, ProbeSite, VentilationMode } from '@ebbgate/shared';
import type { ErrorDirection, FlagCode, Verdict } from '@ebbgate/shared/analysis';
import type { Disturbance } from '@ebbgate/shared/synthetic';

export type ScenarioId =
  | 'fluid-responsive'
  | 'not-responsive'
  | 'atrial-fibrillation'
  | 'spontaneous-breathing'
  | 'motion-artefact'
  | 'damped-arterial-line'
  | 'vasopressor-finger-probe'
  | 'low-tidal-volume'
  | 'unmapped-channel'
  | 'tidal-volume-challenge-responder'
  | 'tidal-volume-challenge-non-responder';

/** An invented patient of the demo hospital, as the simulator models them. */
export interface ScenarioPatient {
  heightCm: number;
  sex: 'male' | 'female';
  heartRate: number;
  spo2: number;
  /** Position on the Frank–Starling curve: mean end-diastolic pressure, mmHg. */
  edp: number;
  /** Mean diastolic arterial pressure, mmHg (default 70). */
  meanDbp?: number;
  /** Perfusion index of the raw pleth, % (default 2). */
  perfusionIndex?: number;
}

export interface ScenarioVentilator {
  mode: VentilationMode;
  /** Set rate, /min. */
  rate: number;
  /** Delivered tidal volume per kg predicted body weight, mL/kg (converted to mL with the patient's PBW). */
  tidalVolumeMlPerKg: number;
  peep?: number;
  peakPressure?: number;
}

/** What the engine and the gateway should make of a scenario's windows. */
export interface ScenarioExpectation {
  /** `assessed`: windows are analysed; `quarantined`: the gateway refuses the batches into quarantine. */
  outcome: 'assessed' | 'quarantined';
  verdict?: Verdict;
  /** Flags every (steady-state) window must carry. */
  flags: FlagCode[];
  /** Flags no window may carry (the scenario is clean in these respects). */
  absentFlags: FlagCode[];
  /** Likely direction of the error each expected flag must state (Ann Intensive Care 2016, doi 10.1186/s13613-016-0216-7). */
  flagDirections?: Partial<Record<FlagCode, ErrorDirection>>;
  /** Per-index verdicts that differ from the window verdict. */
  indexVerdicts?: Partial<Record<'ppv' | 'deltaPop', Verdict>>;
  /** Whether the window PPV must match the generator's truth within the engine tolerance (±1 point). */
  ppvRecovered: boolean;
  /** Why: the clinical reading, for people. */
  reading: string;
}

export interface Scenario {
  id: ScenarioId;
  title: string;
  story: string;
  patient: ScenarioPatient;
  ventilator: ScenarioVentilator;
  channels: ChannelRole[];
  vasopressorRunning?: boolean;
  probeSite?: ProbeSite;
  /** ΔPOP relative to PPV (default 1: the pleth swings with the pulse pressure). */
  deltaPopFactor?: number;
  /** Disturbances of one minute of signal (times within the minute); the stream repeats them. */
  disturbancesPerMinute: Disturbance[];
  /** A channel its monitor profile does not map (the gateway quarantines the batch). */
  unmappedChannel?: { code: string; sampleRate: number; unit: string };
  /**
   * A repeated tidal volume challenge: the stream is cut from `generateChallenge` of
   * @ebbgate/shared/synthetic (6 mL/kg PBW, then 8 mL/kg for `challengeSeconds`, then back), each
   * segment with its own context; `ventilator.tidalVolumeMlPerKg` is the low volume.
   */
  tidalVolumeChallenge?: { kind: 'responder' | 'non-responder'; baselineSeconds: number; challengeSeconds: number };
  expect: ScenarioExpectation;
}
