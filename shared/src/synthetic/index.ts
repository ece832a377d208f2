/**
 * Deterministic synthetic bedside waveforms (`@ebbgate/shared/synthetic`): arterial pressure,
 * pleth, airway pressure and CO2 with a respiratory swing of pulse size known by construction,
 * plus disturbances. Used by the engine tests, the bedside simulator and the gateway tests.
 *
 * @example
 * const { channels, truth } = generateWindow({ seed: 1, heartRate: 80, respiratoryRate: 15, ppv: 12 });
 * // channels[0].samples: Float64Array of arterial pressure at 125 Hz; truth.cycles[i].ppv per breath
 */
import { encodeSamplesFloat32, type IngestBatch, type AnalysisContext } from '../schemas/ingest';
import type { SyntheticWindow } from './types';

export { generateWindow } from './generate';
export { generateChallenge, type ChallengeKind, type ChallengeSpec, type ChallengeSegment, type SyntheticChallenge } from './challenge';
export { catheterResponse } from './disturbances';
export { createPrng, type Prng } from './prng';
export type * from './types';

/** MDC-style codes the synthetic batches use for each role (the engine's default code map knows them). */
export const SYNTHETIC_CHANNEL_CODES = {
  abp: 'MDC_PRESS_BLD_ART_ABP',
  pleth: 'MDC_PULS_OXIM_PLETH',
  paw: 'MDC_PRESS_AWAY',
  co2: 'MDC_AWAY_CO2',
} as const;

/**
 * Wraps a synthetic window as an ingest batch (float32 base64 samples, NaN gaps kept as NaN).
 * The role is set explicitly on every channel so no code map is needed to read it back.
 */
export function toIngestBatch(window: SyntheticWindow, ids: { monitorId: string; batchId: string; startTime: string; context?: AnalysisContext }): IngestBatch {
  return {
    monitorId: ids.monitorId,
    batchId: ids.batchId,
    startTime: ids.startTime,
    channels: window.channels.map((c) => ({
      code: SYNTHETIC_CHANNEL_CODES[c.role],
      sampleRate: c.sampleRate,
      unit: c.unit,
      role: c.role,
      samples: encodeSamplesFloat32(c.samples),
    })),
    ...(ids.context ? { context: ids.context } : {}),
  };
}

/** Renders a window as a CSV capture: `time,abp[mmHg],paw[cmH2O]` header, gaps as empty cells. */
export function toCsvCapture(window: SyntheticWindow): string {
  const ch = window.channels;
  const fs = ch[0]?.sampleRate ?? 125;
  const lines = [['time', ...ch.map((c) => `${c.role}[${c.unit}]`)].join(',')];
  const n = Math.min(...ch.map((c) => c.samples.length));
  for (let i = 0; i < n; i++) {
    const cells = [(i / fs).toFixed(6)];
    for (const c of ch) cells.push(Number.isNaN(c.samples[i]) ? '' : c.samples[i].toFixed(4));
    lines.push(cells.join(','));
  }
  return lines.join('\n') + '\n';
}
