import { z } from 'zod';

const bucket = (fields: string[]) => z.object({ t: z.string(), ...Object.fromEntries(fields.map((f) => [f, z.number().int()])) });

/** The overview board: counts over the last hour and per-minute series, each linked to its list. */
export const overviewSchema = z.object({
  generatedAt: z.string(),
  /** Length of the series, minutes; one bucket per minute, oldest first. */
  windowMinutes: z.number().int(),
  inbound: z.object({
    accepted: z.number().int(),
    rejected: z.number().int(),
    quarantined: z.number().int(),
    /** Messages per minute over the last five minutes. */
    perMinute: z.number(),
    series: z.array(bucket(['accepted', 'rejected', 'quarantined'])),
  }),
  assessments: z.object({
    valid: z.number().int(),
    questionable: z.number().int(),
    notValid: z.number().int(),
    series: z.array(bucket(['valid', 'questionable', 'notValid'])),
  }),
  delivery: z.object({
    /** Waiting to be sent now: pending, retrying and waiting for patient context. */
    queueDepth: z.number().int(),
    failed: z.number().int(),
    delivered: z.number().int(),
    series: z.array(bucket(['delivered', 'failed'])),
  }),
  destinations: z.array(
    z.object({ id: z.string(), name: z.string(), state: z.enum(['up', 'paused', 'circuit-open', 'down', 'misconfigured']), downSince: z.string().nullable() }),
  ),
  monitors: z.object({ total: z.number().int(), live: z.number().int() }),
});
export type Overview = z.infer<typeof overviewSchema>;
