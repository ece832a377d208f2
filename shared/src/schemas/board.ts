import { z } from 'zod';
import { isoDateTime } from './common';
import { verdictSchema } from './assessments';

/**
 * What a bed's data is doing right now, worst first when several apply:
 * no-monitor (nothing assigned), quarantining (inbound refused into quarantine in the last minutes),
 * stale (the monitor has not sent recently), no-patient (results wait for the EHR to name the patient),
 * sending (data arrives and results find their patient).
 */
export const bedDataStateSchema = z.enum(['no-monitor', 'quarantining', 'stale', 'no-patient', 'sending']);
export type BedDataState = z.infer<typeof bedDataStateSchema>;

export const boardQuerySchema = z.object({
  unit: z.string().max(64).optional(),
  state: bedDataStateSchema.optional(),
  /** Matches bed name, monitor identifier or patient reference. */
  q: z.string().max(64).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(60),
});
export type BoardQuery = z.infer<typeof boardQuerySchema>;

/** One point of a bed's last hour: the mean PPV of the usable windows in a 5-minute bucket. */
export const miniTrendPointSchema = z.object({ t: z.string(), ppv: z.number().nullable(), verdict: verdictSchema.nullable() });

export const bedTileSchema = z.object({
  bedId: z.string(),
  bedName: z.string(),
  unit: z.string(),
  patientRef: z.string().nullable(),
  /** From the EHR's Patient resource once the delivery capability caches it; null until then. */
  patientName: z.string().nullable(),
  patientMrn: z.string().nullable(),
  monitor: z.object({ id: z.string(), identifier: z.string(), lastSeenAt: z.string().nullable() }).nullable(),
  state: bedDataStateSchema,
  /** In words, why the state is what it is. */
  stateReason: z.string(),
  latest: z
    .object({
      assessmentId: z.string(),
      windowEnd: z.string(),
      ageSeconds: z.number(),
      verdict: verdictSchema,
      ppv: z.number().nullable(),
      spv: z.number().nullable(),
      deltaPop: z.number().nullable(),
      /** The most severe quality flag of the window, in words (null when it has none). */
      mainFlag: z.object({ code: z.string(), severity: z.string(), reason: z.string() }).nullable(),
      flagCount: z.number().int(),
    })
    .nullable(),
  trend: z.array(miniTrendPointSchema),
});
export type BedTile = z.infer<typeof bedTileSchema>;

export const boardSchema = z.object({
  generatedAt: z.string(),
  /** Seconds without data after which a monitor counts as stale. */
  staleAfterSeconds: z.number(),
  units: z.array(z.string()),
  /** Beds per state over the whole board (before the state filter and paging). */
  counts: z.record(bedDataStateSchema, z.number().int()),
  items: z.array(bedTileSchema),
  page: z.number().int(),
  pageSize: z.number().int(),
  total: z.number().int(),
});
export type Board = z.infer<typeof boardSchema>;

export const trendQuerySchema = z.object({
  /** Span ending now (or at `to`), hours, 1 to 48. */
  hours: z.coerce.number().min(1).max(48).default(6),
  to: isoDateTime.optional(),
  /** Above this many windows in the span the series is reduced to min/max per bucket. */
  maxPoints: z.coerce.number().int().min(50).max(5000).default(1200),
});
export type TrendQuery = z.infer<typeof trendQuerySchema>;

const valueSchema = z.number().nullable();

/**
 * One point of a bed trend. Raw: one window. Downsampled: one bucket, keeping the minimum and
 * maximum PPV windows (so a peak is never averaged away) and the worst verdict in it.
 */
export const trendPointSchema = z.object({
  t: z.string(),
  assessmentId: z.string(),
  verdict: verdictSchema,
  ppv: valueSchema,
  spv: valueSchema,
  deltaPop: valueSchema,
  heartRate: valueSchema,
  respiratoryRate: valueSchema,
  /** Windows this point stands for (1 when raw). */
  windows: z.number().int(),
});
export type TrendPoint = z.infer<typeof trendPointSchema>;

export const trendEventSchema = z.object({
  t: z.string(),
  kind: z.enum(['tidal-volume', 'ventilation-mode', 'vasopressor', 'checklist', 'bed-transfer', 'tidal-volume-challenge', 'flush-test']),
  label: z.string(),
  assessmentId: z.string().nullable(),
});
export type TrendEvent = z.infer<typeof trendEventSchema>;

export const bedTrendSchema = z.object({
  bed: z.object({ id: z.string(), name: z.string(), unit: z.string() }),
  from: z.string(),
  to: z.string(),
  /** Windows in the span; points are fewer when downsampled. */
  windows: z.number().int(),
  downsampled: z.boolean(),
  bucketSeconds: z.number().nullable(),
  points: z.array(trendPointSchema),
  events: z.array(trendEventSchema),
  /** The PPV band from site settings, with where it comes from. */
  greyZone: z.object({ lower: z.number().nullable(), upper: z.number().nullable(), label: z.string(), source: z.string() }).nullable(),
});
export type BedTrend = z.infer<typeof bedTrendSchema>;

/** The latest flush test of a monitor's arterial line (engine's FlushTestResult), or null. */
export const latestFlushTestSchema = z.object({
  latest: z
    .object({
      assessmentId: z.string(),
      windowEnd: z.string(),
      flushTest: z.object({
        releaseTime: z.number(),
        naturalFrequencyHz: z.number().nullable(),
        dampingRatio: z.number().nullable(),
        amplitudeRatio: z.number().nullable(),
        oscillations: z.number(),
        region: z.string(),
        regionText: z.string(),
      }),
      dampingEstimate: z.string().nullable(),
    })
    .nullable(),
});
export type LatestFlushTest = z.infer<typeof latestFlushTestSchema>;
