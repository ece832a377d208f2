import type { AnalysisContext } from '@ebbgate/shared';
import { predictedBodyWeightKg } from '@ebbgate/shared/analysis';
import type { Disturbance, SyntheticSpec } from '@ebbgate/shared/synthetic';
import { respiratorySwing, type RespiratorySwing } from '../physiology/frank-starling';
import type { Scenario } from './types';

/** Delivered tidal volume in mL for the scenario's mL/kg of Devine/ARDSNet predicted body weight. */
export function tidalVolumeMl(s: Scenario): number {
  // Rounded up so 8 mL/kg stays at or above 8 mL/kg once in whole millilitres.
  return Math.ceil(s.ventilator.tidalVolumeMlPerKg * predictedBodyWeightKg(s.patient.heightCm, s.patient.sex));
}

/** The swing the scenario's point on the Frank–Starling curve puts in. */
export function scenarioSwing(s: Scenario): RespiratorySwing {
  return respiratorySwing({ edp: s.patient.edp, tidalVolumeMlPerKg: s.ventilator.tidalVolumeMlPerKg });
}

/** Context the adapter sends with each batch (what a real adapter reads off the ventilator and chart). */
export function scenarioContext(s: Scenario): AnalysisContext {
  return {
    ventilationMode: s.ventilator.mode,
    setRespiratoryRate: s.ventilator.rate,
    tidalVolumeMl: tidalVolumeMl(s),
    patientHeightCm: s.patient.heightCm,
    patientSex: s.patient.sex,
    ...(s.vasopressorRunning !== undefined ? { vasopressorRunning: s.vasopressorRunning } : {}),
    ...(s.probeSite ? { probeSite: s.probeSite } : {}),
    plethScaling: 'raw',
  };
}

/**
 * Repeats one minute's disturbances over a longer stretch: timed ones (motion, flush, gap,
 * flat line) every 60 s, counted ones (ectopic beats, efforts) scaled to the length.
 */
export function expandDisturbances(perMinute: Disturbance[], durationSeconds: number): Disturbance[] {
  const minutes = durationSeconds / 60;
  const out: Disturbance[] = [];
  for (const d of perMinute) {
    if (d.kind === 'motion' || d.kind === 'flush' || d.kind === 'gap' || d.kind === 'flat-line') {
      for (let m = 0; m * 60 + d.start < durationSeconds; m++) out.push({ ...d, start: d.start + 60 * m });
    } else if (d.kind === 'ectopic' || d.kind === 'spontaneous-breaths') {
      out.push({ ...d, count: Math.max(1, Math.round(d.count * minutes)) });
    } else out.push(d);
  }
  return out;
}

/** The generator spec (`@ebbgate/shared/synthetic`) for a stretch of the scenario. */
export function scenarioSpec(s: Scenario, seed: number, durationSeconds: number, sampleRate = 125): SyntheticSpec {
  const swing = scenarioSwing(s);
  return {
    seed,
    durationSeconds,
    sampleRate,
    heartRate: s.patient.heartRate,
    respiratoryRate: s.ventilator.rate,
    ppv: swing.ppv,
    deltaPop: swing.ppv * (s.deltaPopFactor ?? 1),
    channels: s.channels,
    meanDbp: s.patient.meanDbp ?? 70,
    meanPp: swing.meanPp,
    perfusionIndex: s.patient.perfusionIndex ?? 2,
    plethScaling: 'raw',
    peep: s.ventilator.peep,
    peakPressure: s.ventilator.peakPressure,
    disturbances: expandDisturbances(s.disturbancesPerMinute, durationSeconds),
  };
}
