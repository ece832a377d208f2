import { z } from 'zod';

/**
 * The `delivery` section of the gateway config (config/default.json), validated once at start. It
 * lives with the config (not in the delivery capability) so the config imports no capability.
 */
export const deliveryConfigSchema = z.object({
  /** FHIR Observation.status of what is sent. */
  observationStatus: z.enum(['preliminary', 'final']),
  /** Not-valid (or not computable) results: withheld, or sent with dataAbsentReason. */
  notValidPolicy: z.enum(['withhold', 'data-absent']),
  /** How often an idle worker looks for due rows, ms. */
  pollMs: z.number().int().min(10).max(60_000),
  /** Rows claimed per pass (FOR UPDATE SKIP LOCKED). */
  claimBatch: z.number().int().min(1).max(1000),
  /**
   * 1: one conditional-create POST per Observation; more: transaction Bundles of up to this many
   * (default 25: a backlog drains several times faster; a bundle the EHR rejects as a whole is
   * re-sent entry by entry so only the bad Observation fails).
   */
  bundleSize: z.number().int().min(1).max(500),
  /** Sends in flight at once per worker. */
  concurrency: z.number().int().min(1).max(64),
  /** A claimed row is due again after this if its worker died (the lease). */
  leaseSeconds: z.number().min(1).max(3600),
  requestTimeoutMs: z.number().int().min(100).max(300_000),
  retry: z.object({
    /** Attempts before a row is failed (408/429/5xx/timeouts). */
    limit: z.number().int().min(1).max(100),
    baseMs: z.number().int().min(1),
    maxMs: z.number().int().min(1),
  }),
  circuit: z.object({
    /** Consecutive failed attempts that open the circuit. */
    failureThreshold: z.number().int().min(1),
    /** Open this long, then one trial send (half-open). */
    openSeconds: z.number().min(0.1).max(3600),
  }),
  patientContext: z.object({
    /** Bed → patient answers are reused this long (short: a bed can change patients). */
    cacheSeconds: z.number().min(0).max(86_400),
    /** A result with no patient context is looked at again after this. */
    retrySeconds: z.number().min(0.1).max(86_400),
  }),
  alerts: z.object({
    enabled: z.boolean(),
    checkIntervalMs: z.number().int().min(50).max(600_000),
    /**
     * A destination failing for this long opens a "down" incident. Default of the site setting
     * `alerts.destinationDownMinutes` (same name), which an admin can change at run time.
     */
    destinationDownMinutes: z.number().min(0.001),
    /** This many failed deliveries within `failureWindowMinutes` open a "failures" incident (default of the site setting of the same name). */
    failureThreshold: z.number().int().min(1),
    /** The window failed deliveries are counted over, minutes (not a site setting). */
    failureWindowMinutes: z.number().min(0.01),
    recipients: z.array(z.email()),
    /** Base URL of the console for links in mail; defaults to gateway.publicUrl. */
    consoleUrl: z.url().nullable(),
  }),
  /** Optional second destination: HL7 v2 ORU^R01 over MLLP. */
  hl7: z.object({
    enabled: z.boolean(),
    host: z.string(),
    port: z.number().int().min(0).max(65535),
    sendingFacility: z.string().min(1),
    receivingApplication: z.string().min(1),
  }),
});
export type DeliveryConfig = z.infer<typeof deliveryConfigSchema>;
