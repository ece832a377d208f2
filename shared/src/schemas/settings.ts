import { z } from 'zod';

export const indexNameSchema = z.enum(['ppv', 'spv', 'deltaPop', 'perfusionIndex', 'heartRate', 'respiratoryRate', 'hrRrRatio']);

/** A decision band always carries where it comes from; it is context, never an order to treat. */
export const decisionBandSchema = z
  .object({
    id: z
      .string()
      .min(1)
      .max(64)
      .regex(/^[a-z0-9-]+$/, 'lower-case letters, digits and dashes'),
    index: indexNameSchema,
    lower: z.number().nullable(),
    upper: z.number().nullable(),
    unit: z.string().max(16),
    label: z.string().min(1).max(200),
    source: z.string().min(3, 'name the source of the band').max(400),
  })
  .refine((b) => b.lower === null || b.upper === null || b.lower < b.upper, { message: 'lower must be below upper', path: ['upper'] });

/** Site settings an admin changes at run time (stored in the database, defaults from the engine and config). */
export const siteSettingsSchema = z.object({
  analysis: z.object({
    /** Consecutive usable respiratory cycles averaged into a window value (common practice: 3). */
    cyclesToAverage: z.number().int().min(1).max(20),
    /** Length of an analysis window, seconds. */
    windowSeconds: z.number().int().min(10).max(300),
    bands: z.array(decisionBandSchema).max(50),
  }),
  delivery: z.object({
    observationStatus: z.enum(['preliminary', 'final']),
    /** What happens to a not-valid result: not sent, or sent with a dataAbsentReason. */
    notValidPolicy: z.enum(['withhold', 'data-absent']),
  }),
  alerts: z.object({
    recipients: z.array(z.email()).max(50),
    /** Mail when a destination has been unreachable this long. */
    destinationDownMinutes: z.number().min(0.1).max(1440),
    /** Mail when this many deliveries failed within the alert window (config `delivery.alerts.failureWindowMinutes`, 15 min by default). */
    failureThreshold: z.number().int().min(1).max(100000),
  }),
});
export type SiteSettings = z.infer<typeof siteSettingsSchema>;
export type DecisionBandInput = z.infer<typeof decisionBandSchema>;
