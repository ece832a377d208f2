import { z } from 'zod';

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
  }),
  database: z.object({
    url: z.string().regex(/^(mysql|mariadb):\/\//, 'a mysql:// or mariadb:// URL'),
    poolSize: z.number().int().min(1).max(500),
  }),
  log: z.object({ level: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']) }),
  auth: z.object({
    jwtSecret: z.string().min(32, 'at least 32 characters'),
    sessionMinutes: z.number().int().min(1).max(24 * 60),
    lockoutThreshold: z.number().int().min(1).max(100),
    lockoutMinutes: z.number().int().min(1),
    signInAttemptsPerMinute: z.number().int().min(1),
  }),
  mllp: z.object({ enabled: z.boolean(), host: z.string(), port: z.number().int().min(0).max(65535) }),
  ehr: z.object({
    fhirBaseUrl: z.url(),
    tokenUrl: z.url(),
    clientId: z.string().min(1),
    clientSecret: z.string().min(1),
  }),
  mail: z.object({ smtpHost: z.string(), smtpPort: z.number().int().min(1).max(65535), from: z.string() }),
  workers: z.object({ enabled: z.boolean() }),
});
export type Config = z.infer<typeof configSchema>;
