import { z } from 'zod';

/** What a channel carries, as the analysis engine sees it. */
export const channelRoleSchema = z.enum(['abp', 'pleth', 'paw', 'co2']);
export type ChannelRole = z.infer<typeof channelRoleSchema>;
export const CHANNEL_ROLES = channelRoleSchema.options;

export const probeSiteSchema = z.enum(['finger', 'ear', 'forehead', 'toe', 'other']);
export type ProbeSite = z.infer<typeof probeSiteSchema>;

/** `raw`: the pleth keeps its DC level; `auto-scaled`: the monitor normalised it (no PI). */
export const plethScalingSchema = z.enum(['raw', 'auto-scaled']);
export type PlethScaling = z.infer<typeof plethScalingSchema>;

export const ventilationModeSchema = z.enum(['controlled', 'assisted', 'spontaneous', 'unknown']);
export type VentilationMode = z.infer<typeof ventilationModeSchema>;

/**
 * Checklist items that make PPV unreliable whatever the signal looks like; travel with a batch or
 * are set on the bed (audited). Each becomes a flag with its source and direction.
 */
export const checklistContextShape = {
  /** Chest open (sternotomy, thoracotomy). */
  openChest: z.boolean().optional(),
  /** Raised intra-abdominal pressure (intra-abdominal hypertension). */
  intraAbdominalPressureHigh: z.boolean().optional(),
  /** Right ventricular dysfunction. */
  rightVentricularDysfunction: z.boolean().optional(),
  /** ECMO or other extracorporeal support. */
  extracorporealSupport: z.boolean().optional(),
  /** Prone position. */
  pronePosition: z.boolean().optional(),
  /** Paediatric patient (predicted body weight formula not validated). */
  paediatricPatient: z.boolean().optional(),
};
export const checklistContextSchema = z.object(checklistContextShape);
export type ChecklistContext = z.infer<typeof checklistContextSchema>;
export const CHECKLIST_CONTEXT_KEYS = Object.keys(checklistContextShape) as (keyof ChecklistContext)[];

/**
 * Clinical and device context that travels with a batch (or is set on the monitor profile) and
 * decides whether the indices are valid at all.
 */
export const analysisContextSchema = z.object({
  ventilationMode: ventilationModeSchema.optional(),
  /** Set ventilator rate, breaths per minute. */
  setRespiratoryRate: z.number().positive().max(80).optional(),
  /** Delivered tidal volume, mL. */
  tidalVolumeMl: z.number().positive().max(3000).optional(),
  patientHeightCm: z.number().min(40).max(250).optional(),
  patientSex: z.enum(['male', 'female']).optional(),
  vasopressorRunning: z.boolean().optional(),
  /** Static respiratory-system compliance, mL/cmH2O. */
  complianceMlPerCmH2O: z.number().positive().max(300).optional(),
  probeSite: probeSiteSchema.optional(),
  plethScaling: plethScalingSchema.optional(),
  /** Free-text description of the monitor's own filtering of its waveform output, if any. */
  builtInFiltering: z.string().max(200).optional(),
  ...checklistContextShape,
});
export type AnalysisContext = z.infer<typeof analysisContextSchema>;

/** Samples either as a JSON number array (null for a gap) or base64 little-endian float32. */
export const samplesSchema = z.union([
  z.array(z.number().nullable()).min(1).max(2_000_000),
  z.object({
    encoding: z.literal('float32le-base64'),
    data: z.string().min(1).max(12_000_000),
  }),
]);
export type Samples = z.infer<typeof samplesSchema>;

export const ingestChannelSchema = z.object({
  /** IEEE 11073 MDC code (e.g. `150036` or `MDC_PRESS_BLD_ART_ABP`) or the adapter's own label. */
  code: z.string().min(1).max(64),
  /** Samples per second. */
  sampleRate: z.number().positive().max(2000),
  /** Unit as sent (the profile says how to scale it); optional when the profile fixes it. */
  unit: z.string().max(32).optional(),
  /** Only for captures without a profile (CLI, test bench): the role, overriding the code map. */
  role: channelRoleSchema.optional(),
  samples: samplesSchema,
});
export type IngestChannel = z.infer<typeof ingestChannelSchema>;

/** Body of POST /api/v1/ingest/batches, also the JSON capture format of the CLI and test bench. */
export const ingestBatchSchema = z.object({
  /** The monitor's identifier (EUI-64 or serial), as registered. */
  monitorId: z.string().min(1).max(64),
  /** Idempotency key chosen by the adapter. */
  batchId: z.string().min(1).max(128),
  /** Time of the first sample of every channel. */
  startTime: z.iso.datetime({ offset: true }),
  channels: z.array(ingestChannelSchema).min(1).max(16),
  context: analysisContextSchema.optional(),
});
export type IngestBatch = z.infer<typeof ingestBatchSchema>;

/** Decodes either sample encoding into a Float64Array; JSON nulls become NaN (gaps). */
export function decodeSamples(samples: Samples): Float64Array {
  if (Array.isArray(samples)) {
    const out = new Float64Array(samples.length);
    for (let i = 0; i < samples.length; i++) out[i] = samples[i] ?? Number.NaN;
    return out;
  }
  const bytes = base64ToBytes(samples.data);
  if (bytes.length % 4 !== 0) throw new RangeError('float32le-base64 data is not a whole number of 4-byte samples');
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Float64Array(bytes.length / 4);
  for (let i = 0; i < out.length; i++) out[i] = view.getFloat32(i * 4, true);
  return out;
}

/** Encodes samples as base64 little-endian float32 (the compact ingest encoding). */
export function encodeSamplesFloat32(values: ArrayLike<number>): { encoding: 'float32le-base64'; data: string } {
  const bytes = new Uint8Array(values.length * 4);
  const view = new DataView(bytes.buffer);
  for (let i = 0; i < values.length; i++) view.setFloat32(i * 4, values[i] as number, true);
  return { encoding: 'float32le-base64', data: bytesToBase64(bytes) };
}

function base64ToBytes(b64: string): Uint8Array {
  if (typeof Buffer !== 'undefined') return new Uint8Array(Buffer.from(b64, 'base64'));
  const bin = atob(b64);
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

function bytesToBase64(bytes: Uint8Array): string {
  if (typeof Buffer !== 'undefined') return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('base64');
  let bin = '';
  for (const b of bytes) bin += String.fromCharCode(b);
  return btoa(bin);
}
