import type { AnalysisContext } from '../schemas/ingest';
import { generateWindow } from './generate';
import type { Disturbance, SyntheticChannel, SyntheticTruth } from './types';

/** Kinds of synthetic tidal volume challenge. */
export type ChallengeKind = 'responder' | 'non-responder' | 'too-short' | 'too-small' | 'ectopy';

export interface ChallengeSpec {
  seed: number;
  kind: ChallengeKind;
  heartRate?: number;
  respiratoryRate?: number;
  /** PPV put in at the low volume, % (default 7). */
  baselinePpv?: number;
  /** PPV put in at the higher volume, % (default: responder baseline + 5, non-responder baseline + 1). */
  challengePpv?: number;
  /** Seconds at the low volume (default 60) and at the higher volume (default 60; too-short 30). */
  baselineSeconds?: number;
  challengeSeconds?: number;
  sampleRate?: number;
  /** Patient (default 175 cm male: predicted body weight 70.6 kg). */
  patientHeightCm?: number;
  patientSex?: 'male' | 'female';
  complianceMlPerCmH2O?: number;
}

export interface ChallengeSegment {
  channels: SyntheticChannel[];
  context: AnalysisContext;
  truth: SyntheticTruth;
  durationSeconds: number;
}

export interface SyntheticChallenge {
  segments: ChallengeSegment[];
  truth: {
    kind: ChallengeKind;
    /** Mean PPV of the last three clean cycles put in at each volume, %. */
    baselinePpv: number | null;
    challengePpv: number | null;
    deltaPpv: number | null;
    baselineTidalVolumeMl: number;
    challengeTidalVolumeMl: number;
    /** What a correct engine must say: a verdict, or cannot-be-judged for the spoiled kinds. */
    expected: 'positive' | 'negative' | 'cannot-be-judged';
  };
}

/** Devine / ARDSNet predicted body weight, kg (the generator's own copy: truth never comes from the engine). */
function pbw(heightCm: number, sex: 'male' | 'female'): number {
  return (sex === 'male' ? 50 : 45.5) + 0.91 * (heightCm - 152.4);
}

/**
 * A synthetic tidal volume challenge (the protocol of Myatra et al., Crit Care Med 2017, from
 * memory): a segment at 6 mL/kg PBW, then one at 8 mL/kg (6.8 for `too-small`), each with its own
 * context; PPV and the airway-pressure swing rise with the volume. `ectopy` puts premature beats
 * in the higher-volume segment; `too-short` holds the higher volume for 30 s.
 */
export function generateChallenge(spec: ChallengeSpec): SyntheticChallenge {
  const height = spec.patientHeightCm ?? 175;
  const sex = spec.patientSex ?? 'male';
  const kg = pbw(height, sex);
  // Rounded up: a volume rounded down can fall a hair under 8 mL/kg and be flagged as low.
  const low = Math.ceil(6 * kg);
  const high = Math.ceil((spec.kind === 'too-small' ? 6.8 : 8) * kg);
  const p0 = spec.baselinePpv ?? 7;
  const p1 = spec.challengePpv ?? (spec.kind === 'non-responder' ? p0 + 1 : p0 + 5);
  const hr = spec.heartRate ?? 90;
  const rr = spec.respiratoryRate ?? 16;
  const c = spec.complianceMlPerCmH2O ?? 45;
  const common: AnalysisContext = { ventilationMode: 'controlled', setRespiratoryRate: rr, patientHeightCm: height, patientSex: sex, plethScaling: 'raw' };
  const make = (seed: number, ppv: number, vt: number, seconds: number, disturbances: Disturbance[]): ChallengeSegment => {
    const w = generateWindow({
      seed,
      heartRate: hr,
      respiratoryRate: rr,
      ppv,
      durationSeconds: seconds,
      sampleRate: spec.sampleRate,
      channels: ['abp', 'paw'],
      tidalVolumeMl: vt,
      complianceMlPerCmH2O: c,
      disturbances,
    });
    return { channels: w.channels, context: { ...common, tidalVolumeMl: vt }, truth: w.truth, durationSeconds: seconds };
  };
  const before = make(spec.seed, p0, low, spec.baselineSeconds ?? 60, []);
  const afterSeconds = spec.challengeSeconds ?? (spec.kind === 'too-short' ? 30 : 60);
  const after = make(spec.seed + 1, p1, high, afterSeconds, spec.kind === 'ectopy' ? [{ kind: 'ectopic', count: 4 }] : []);
  const b = before.truth.ppvLastCleanCycles;
  const a = after.truth.ppvLastCleanCycles;
  const delta = a !== null && b !== null ? a - b : null;
  const judged = spec.kind === 'responder' || spec.kind === 'non-responder';
  return {
    segments: [before, after],
    truth: {
      kind: spec.kind,
      baselinePpv: b,
      challengePpv: a,
      deltaPpv: delta,
      baselineTidalVolumeMl: low,
      challengeTidalVolumeMl: high,
      expected: !judged || delta === null ? 'cannot-be-judged' : delta >= 3.5 ? 'positive' : 'negative',
    },
  };
}
