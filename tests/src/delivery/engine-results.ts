/**
 * Engine results for the delivery tests, made by the real engine on synthetic waveforms
 * (`@ebbgate/shared/synthetic` + `analyzeWindow`), so what is delivered is what production makes.
 */
import { analyzeWindow, type AnalysisContext, type AnalysisResult } from '@ebbgate/shared/analysis';
import { generateWindow, type SyntheticSpec } from '@ebbgate/shared/synthetic';

export const START = '2026-12-01T10:00:00.000Z';

export function engineResult(
  spec: Partial<SyntheticSpec> & { seed: number },
  context: AnalysisContext = { ventilationMode: 'controlled', tidalVolumeMl: 650, patientHeightCm: 175, patientSex: 'male', plethScaling: 'raw' },
): AnalysisResult {
  const w = generateWindow({ heartRate: 80, respiratoryRate: 15, ppv: 14, channels: ['abp', 'pleth', 'paw'], durationSeconds: 30, ...spec });
  return analyzeWindow({ channels: w.channels, startTime: START, context });
}

/** A clean arterial + pleth window, one with spontaneous efforts, one arterial-only. */
export function scenarios(): { name: string; result: AnalysisResult }[] {
  return [
    { name: 'clean abp+pleth', result: engineResult({ seed: 11 }) },
    { name: 'spontaneous breathing', result: engineResult({ seed: 12, disturbances: [{ kind: 'spontaneous-breaths', count: 4 }] }) },
    { name: 'irregular rhythm', result: engineResult({ seed: 13, disturbances: [{ kind: 'irregular-rhythm', variability: 0.3 }] }) },
    { name: 'arterial only', result: engineResult({ seed: 14, channels: ['abp', 'paw'] }) },
  ];
}
