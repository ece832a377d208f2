// The analysis contract, re-exported in one place so the console follows it from a single import.
// Read from the contract files themselves, not the '@ebbgate/shared/analysis' entry point, so the
// console neither bundles nor type-checks the engine: it only displays its results.
export type * from '../../../shared/src/analysis/types';
import type { AnalysisResult } from '../../../shared/src/analysis/types';
import type { ChannelRole } from '@ebbgate/shared';

/** A stored or uploaded window as the gateway sends it (api-plan: Waveform). */
export interface WaveformChannel {
  role: ChannelRole;
  unit: string;
  sampleRate: number;
  samples: (number | null)[];
}
export interface Waveform {
  startTime: string;
  channels: WaveformChannel[];
}

export interface ParseReport {
  format: string;
  channels: { code: string; role: ChannelRole | null; unit: string; sampleRate: number; samples: number }[];
  warnings: string[];
}

/** Answer of POST /analysis/preview. */
export interface PreviewResult {
  parseReport: ParseReport;
  waveform: Waveform;
  analysis: AnalysisResult;
}

/** The cautions every result carries; shown even where a result has not loaded yet. */
export { CAUTIONS } from '../../../shared/src/analysis/cautions';
