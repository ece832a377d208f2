import { z } from 'zod';
import { deliveryConfigSchema } from './delivery.schema';

/**
 * The gateway's one typed configuration. Built once (load.ts) from config/default.json, an
 * optional extra JSON file and the environment; passed down explicitly, never read from
 * process.env elsewhere.
 */
export const configSchema = z.object({
  env: z.enum(['development', 'test', 'production']),
  gateway: z.object({
    host: z.string().min(1),
    port: z.number().int().min(0).max(65535),
    publicUrl: z.url(),
    jsonBodyLimit: z.string().regex(/^\d+(kb|mb)$/, 'a size such as 512kb or 16mb'),
    consoleDir: z.string(),
    shutdownGraceMs: z.number().int().min(0),
    /** Apply pending migrations at start (development); production runs `npm run db:migrate`. */
    migrateOnStart: z.boolean(),
    /** Create the demo users from config/demo/users.json when missing. */
    seedDemo: z.boolean(),
    /** Time a client has to send the request headers / the whole request, ms (slow-drip senders). */
    headersTimeoutMs: z.number().int().min(1000).max(600_000),
    requestTimeoutMs: z.number().int().min(1000).max(3_600_000),
    /** When set, /metrics needs `Authorization: Bearer <token>`. */
    metricsToken: z.string().min(16, 'at least 16 characters').nullable(),
    /** API requests per minute per device key or session (perKey), and per source address for anonymous callers. */
    rateLimit: z.object({ perSourcePerMinute: z.number().int().min(1), perKeyPerMinute: z.number().int().min(1) }),
    /**
     * Serve the API and console over HTTPS (TLS 1.2+, BCP 195) with the same kind of certificate files
     * as MLLP over TLS. Off by default (loopback); a hospital turns it on or puts a TLS proxy in front.
     */
    tls: z.object({ enabled: z.boolean(), certFile: z.string().min(1), keyFile: z.string().min(1) }),
  }),
  database: z.object({
    /** The runtime user: data privileges only (SELECT, INSERT, UPDATE, DELETE). */
    url: z.string().regex(/^(mysql|mariadb):\/\//, 'a mysql:// or mariadb:// URL'),
    /** The user that applies migrations (DDL); when null, migrations use `url`. */
    migrationUrl: z
      .string()
      .regex(/^(mysql|mariadb):\/\//, 'a mysql:// or mariadb:// URL')
      .nullable(),
    poolSize: z.number().int().min(1).max(500),
    /** Requests waiting for a pooled connection beyond this fail at once instead of queueing without bound. */
    queueLimit: z.number().int().min(1).max(100_000),
  }),
  log: z.object({ level: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']) }),
  auth: z.object({
    jwtSecret: z.string().min(32, 'at least 32 characters'),
    /** Idle lifetime: a session not renewed within this ends. */
    sessionMinutes: z
      .number()
      .int()
      .min(1)
      .max(24 * 60),
    /** Absolute lifetime from sign-in: renewing never goes past it. */
    sessionAbsoluteMinutes: z
      .number()
      .int()
      .min(1)
      .max(7 * 24 * 60),
    signInAttemptsPerMinute: z.number().int().min(1),
    /**
     * Failed sign-ins per account (username as typed, known or not) and per source address: after
     * the free failures each further one doubles the wait before the next try, up to the maximum.
     * Counts are forgotten after `forgetMinutes` without failures.
     */
    throttle: z.object({
      accountFreeFailures: z.number().int().min(1).max(1000),
      sourceFreeFailures: z.number().int().min(1).max(100_000),
      baseDelaySeconds: z.number().int().min(1).max(3600),
      accountMaxDelaySeconds: z.number().int().min(1).max(3600),
      sourceMaxDelaySeconds: z
        .number()
        .int()
        .min(1)
        .max(24 * 3600),
      forgetMinutes: z
        .number()
        .int()
        .min(1)
        .max(7 * 24 * 60),
    }),
  }),
  mllp: z.object({
    enabled: z.boolean(),
    host: z.string(),
    port: z.number().int().min(0).max(65535),
    /** Largest HL7 message a plain-MLLP connection may send (bytes between the MLLP blocks). */
    maxFrameBytes: z
      .number()
      .int()
      .min(1024)
      .max(64 * 1024 * 1024),
    /** A connection with no traffic for this long is closed. */
    idleTimeoutSeconds: z.number().min(0.1).max(3600),
    /** A frame must be complete this long after its start block (slow-drip senders are closed). */
    frameTimeoutSeconds: z.number().min(0.1).max(3600),
    /** Open MLLP connections, all listeners together, and per source address. */
    maxConnections: z.number().int().min(1),
    maxConnectionsPerSource: z.number().int().min(1),
    /** Frames waiting for their ACK on one connection before reading from it pauses. */
    maxPendingFrames: z.number().int().min(1).max(1000),
    /** Plain MLLP only from these addresses/CIDRs and those registered on monitors or profiles. */
    allowedSources: z.array(z.string()),
    /** MLLP over TLS (1.2+) with client certificates, beside the plain listener. */
    tls: z.object({
      enabled: z.boolean(),
      host: z.string(),
      port: z.number().int().min(0).max(65535),
      maxFrameBytes: z
        .number()
        .int()
        .min(1024)
        .max(64 * 1024 * 1024),
      certFile: z.string(),
      keyFile: z.string(),
      /** CA bundle client certificates must chain to. */
      caFile: z.string(),
    }),
  }),
  ehr: z.object({
    fhirBaseUrl: z.url(),
    tokenUrl: z.url(),
    clientId: z.string().min(1),
    clientSecret: z.string().min(1),
  }),
  mail: z.object({ smtpHost: z.string(), smtpPort: z.number().int().min(1).max(65535), from: z.string() }),
  workers: z.object({ enabled: z.boolean() }),
  ingest: z.object({
    /** Largest accepted batch body (HTTP) or HL7 message (MLLP), bytes; larger ones get 413 / AR. */
    maxBatchBytes: z
      .number()
      .int()
      .min(1024)
      .max(64 * 1024 * 1024),
    /** Analysis windows waiting beyond this make ingest answer 429 with Retry-After. */
    backlogLimit: z.number().int().min(1),
    retryAfterSeconds: z.number().int().min(1).max(3600),
    /** Waveform segments and inbound messages older than this are purged. */
    retentionDays: z.number().min(0.001).max(3650),
    purgeIntervalMinutes: z
      .number()
      .min(0.01)
      .max(24 * 60),
    /** A jump forward bigger than this between batches restarts window planning at the new batch. */
    gapResetSeconds: z.number().positive().max(3600),
    /**
     * Group commit of concurrent batches (ingest/group-commit.ts). Off by default: measured on 2 busy
     * cores it lowered throughput (a group's batches run one after another on one connection).
     */
    groupCommit: z.boolean(),
    /** Analysis windows waiting for one monitor beyond this make that monitor's batches wait (429/AR). */
    monitorBacklogLimit: z.number().int().min(1),
    /** Rejected and quarantined messages are purged after these (quarantine: unless handled sooner). */
    rejectedRetentionDays: z.number().min(0.0001).max(3650),
    quarantineRetentionDays: z.number().min(0.0001).max(3650),
    /** Input from unauthenticated or unknown senders: what is kept, how often, how long. */
    strangers: z.object({
      keepBytes: z
        .number()
        .int()
        .min(0)
        .max(1024 * 1024),
      perSourcePerMinute: z.number().int().min(1),
      retentionDays: z.number().min(0.0001).max(3650),
    }),
  }),
  analysis: z.object({
    /** Analysis window length, s (sliding). */
    windowSeconds: z.number().min(5).max(600),
    /** Start of one window to the start of the next, s. */
    stepSeconds: z.number().min(1).max(600),
    /** Consecutive usable respiratory cycles averaged into a window value. */
    cyclesPerWindow: z.number().int().min(1).max(20),
    /** How often an idle worker looks for due windows, ms. */
    pollMs: z.number().int().min(10).max(60_000),
    /** Most windows one worker analyses per poll before yielding. */
    windowsPerPoll: z.number().int().min(1).max(1000),
    /** Run the analysis worker in this process (with workers.enabled); off for ingest-only nodes. */
    workerEnabled: z.boolean(),
    /** Upload limit of the test bench, bytes. */
    previewMaxBytes: z
      .number()
      .int()
      .min(1024)
      .max(64 * 1024 * 1024),
  }),
  delivery: deliveryConfigSchema,
});
export type Config = z.infer<typeof configSchema>;
