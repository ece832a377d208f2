import { z } from 'zod';
import { channelRoleSchema } from './ingest';
import { isoDateTime, pageQuerySchema } from './common';

export const verdictSchema = z.enum(['valid', 'questionable', 'not-valid']);

export const assessmentSummarySchema = z.object({
  id: z.string(),
  monitorId: z.string(),
  bedId: z.string().nullable(),
  patientRef: z.string().nullable(),
  /** Name and MRN from the EHR's Patient resource, set with patientRef once a delivery files it (null before). */
  patientName: z.string().nullable(),
  patientMrn: z.string().nullable(),
  windowStart: z.string(),
  windowEnd: z.string(),
  verdict: verdictSchema,
  ppv: z.number().nullable(),
  spv: z.number().nullable(),
  deltaPop: z.number().nullable(),
  perfusionIndex: z.number().nullable(),
  heartRate: z.number().nullable(),
  respiratoryRate: z.number().nullable(),
  flags: z.array(z.string()),
  engineVersion: z.string(),
  /** Filled by the delivery capability when it is present; null otherwise. */
  deliveryStatus: z.string().nullable(),
  enteredInError: z.boolean(),
  createdAt: z.string(),
});
export type AssessmentSummary = z.infer<typeof assessmentSummarySchema>;

export const assessmentQuerySchema = pageQuerySchema.extend({
  monitor: z.string().max(64).optional(),
  bed: z.string().max(64).optional(),
  patient: z.string().max(128).optional(),
  verdict: verdictSchema.optional(),
  flag: z.string().max(64).optional(),
  /** Only windows where this index has a value. */
  index: z.enum(['ppv', 'spv', 'deltaPop', 'perfusionIndex', 'heartRate', 'respiratoryRate']).optional(),
  engineVersion: z.string().max(32).optional(),
  from: isoDateTime.optional(),
  to: isoDateTime.optional(),
});
export type AssessmentQuery = z.infer<typeof assessmentQuerySchema>;

/** Samples for plotting; time of sample i = startTime + i / sampleRate (the AnalysisResult time base). */
export const waveformSchema = z.object({
  startTime: z.string(),
  channels: z.array(z.object({ role: channelRoleSchema, unit: z.string(), sampleRate: z.number(), samples: z.array(z.number().nullable()) })),
});
export type Waveform = z.infer<typeof waveformSchema>;

export const assessmentDetailSchema = z.object({
  assessment: assessmentSummarySchema.extend({
    enteredInErrorAt: z.string().nullable(),
    enteredInErrorBy: z.string().nullable(),
    enteredInErrorReason: z.string().nullable(),
    /** The engine's full AnalysisResult (beats, cycles, flags, cautions). */
    result: z.record(z.string(), z.unknown()),
    /** The tidal volume challenge this window completed (TidalVolumeChallengeResult), or null. */
    tidalVolumeChallenge: z.record(z.string(), z.unknown()).nullable().optional(),
  }),
  waveform: waveformSchema,
  observations: z.array(z.record(z.string(), z.unknown())),
});

export const markInErrorSchema = z.object({ reason: z.string().trim().min(3).max(1000) });

/** Answer of POST /analysis/preview (test bench): what was read, the samples, the full analysis. */
export const previewResultSchema = z.object({
  parseReport: z.object({
    format: z.enum(['json', 'csv', 'hl7']),
    profileId: z.string().nullable(),
    channels: z.array(z.object({ code: z.string(), role: channelRoleSchema, unit: z.string(), sampleRate: z.number(), samples: z.number().int() })),
    warnings: z.array(z.string()),
  }),
  waveform: waveformSchema,
  analysis: z.record(z.string(), z.unknown()),
});
export type PreviewResult = z.infer<typeof previewResultSchema>;
export const previewFieldsSchema = z.object({ profileId: z.string().max(36).optional() });

/** Re-analysis of stored windows with the engine this gateway runs; earlier assessments stay. */
export const reanalysisRequestSchema = z
  .object({
    monitorId: z.string().max(36).optional(),
    from: z.iso.datetime({ offset: true }).optional(),
    to: z.iso.datetime({ offset: true }).optional(),
  })
  .refine((q) => !q.from || !q.to || q.from < q.to, { message: 'from must be before to', path: ['to'] });
export const reanalysisAnswerSchema = z.object({ engineVersion: z.string(), queued: z.number().int() });
