import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { configSchema, type Config } from './schema';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');

export class ConfigError extends Error {
  override name = 'ConfigError';
}

type Json = Record<string, unknown>;

/** Environment variables the gateway understands, and where each lands in the config. */
const ENV_MAP: Record<string, { path: string; type: 'string' | 'number' | 'boolean' }> = {
  DATABASE_URL: { path: 'database.url', type: 'string' },
  DATABASE_MIGRATION_URL: { path: 'database.migrationUrl', type: 'string' },
  EBBGATE_METRICS_TOKEN: { path: 'gateway.metricsToken', type: 'string' },
  EBBGATE_HOST: { path: 'gateway.host', type: 'string' },
  EBBGATE_PORT: { path: 'gateway.port', type: 'number' },
  EBBGATE_PUBLIC_URL: { path: 'gateway.publicUrl', type: 'string' },
  EBBGATE_JWT_SECRET: { path: 'auth.jwtSecret', type: 'string' },
  EBBGATE_LOG_LEVEL: { path: 'log.level', type: 'string' },
  EBBGATE_MLLP_PORT: { path: 'mllp.port', type: 'number' },
  EBBGATE_MLLP_ENABLED: { path: 'mllp.enabled', type: 'boolean' },
  EBBGATE_EHR_FHIR_URL: { path: 'ehr.fhirBaseUrl', type: 'string' },
  EBBGATE_EHR_TOKEN_URL: { path: 'ehr.tokenUrl', type: 'string' },
  EBBGATE_EHR_CLIENT_ID: { path: 'ehr.clientId', type: 'string' },
  EBBGATE_EHR_CLIENT_SECRET: { path: 'ehr.clientSecret', type: 'string' },
  EBBGATE_SMTP_PORT: { path: 'mail.smtpPort', type: 'number' },
  EBBGATE_WORKERS: { path: 'workers.enabled', type: 'boolean' },
  EBBGATE_MIGRATE_ON_START: { path: 'gateway.migrateOnStart', type: 'boolean' },
  EBBGATE_SEED_DEMO: { path: 'gateway.seedDemo', type: 'boolean' },
  EBBGATE_MLLP_HOST: { path: 'mllp.host', type: 'string' },
  EBBGATE_HTTPS_ENABLED: { path: 'gateway.tls.enabled', type: 'boolean' },
  EBBGATE_HTTPS_CERT: { path: 'gateway.tls.certFile', type: 'string' },
  EBBGATE_HTTPS_KEY: { path: 'gateway.tls.keyFile', type: 'string' },
  EBBGATE_MLLP_TLS_ENABLED: { path: 'mllp.tls.enabled', type: 'boolean' },
  EBBGATE_MLLP_TLS_PORT: { path: 'mllp.tls.port', type: 'number' },
  EBBGATE_MLLP_TLS_CERT: { path: 'mllp.tls.certFile', type: 'string' },
  EBBGATE_MLLP_TLS_KEY: { path: 'mllp.tls.keyFile', type: 'string' },
  EBBGATE_MLLP_TLS_CA: { path: 'mllp.tls.caFile', type: 'string' },
  EBBGATE_INGEST_GROUP_COMMIT: { path: 'ingest.groupCommit', type: 'boolean' },
  EBBGATE_INGEST_BACKLOG_LIMIT: { path: 'ingest.backlogLimit', type: 'number' },
  EBBGATE_RETENTION_DAYS: { path: 'ingest.retentionDays', type: 'number' },
  EBBGATE_ANALYSIS_WINDOW_SECONDS: { path: 'analysis.windowSeconds', type: 'number' },
  EBBGATE_ANALYSIS_STEP_SECONDS: { path: 'analysis.stepSeconds', type: 'number' },
  EBBGATE_ANALYSIS_POLL_MS: { path: 'analysis.pollMs', type: 'number' },
  EBBGATE_DB_POOL_SIZE: { path: 'database.poolSize', type: 'number' },
  EBBGATE_ANALYSIS_WORKER: { path: 'analysis.workerEnabled', type: 'boolean' },
};

function setPath(target: Json, dotted: string, value: unknown): void {
  const keys = dotted.split('.');
  let node = target;
  for (const key of keys.slice(0, -1)) {
    if (typeof node[key] !== 'object' || node[key] === null) node[key] = {};
    node = node[key] as Json;
  }
  node[keys[keys.length - 1] as string] = value;
}

/** Merges `over` into `base` object by object; arrays and values in `over` replace. */
export function deepMerge(base: Json, over: Json): Json {
  const out: Json = { ...base };
  for (const [k, v] of Object.entries(over)) {
    const b = out[k];
    out[k] = v && typeof v === 'object' && !Array.isArray(v) && b && typeof b === 'object' && !Array.isArray(b) ? deepMerge(b as Json, v as Json) : v;
  }
  return out;
}

function parseEnvValue(name: string, raw: string, type: 'string' | 'number' | 'boolean'): unknown {
  if (type === 'string') return raw;
  if (type === 'number') {
    const n = Number(raw);
    if (!Number.isFinite(n)) throw new ConfigError(`${name}: expected a number, got "${raw}"`);
    return n;
  }
  if (raw === 'true' || raw === '1') return true;
  if (raw === 'false' || raw === '0') return false;
  throw new ConfigError(`${name}: expected true or false, got "${raw}"`);
}

/**
 * Builds the config: config/default.json, then the file named by EBBGATE_CONFIG (if any), then
 * the environment, then `overrides` (tests). Throws a ConfigError naming every bad value.
 */
export function loadConfig(env: NodeJS.ProcessEnv = process.env, overrides: Json = {}): Config {
  let raw = JSON.parse(readFileSync(path.join(repoRoot, 'config/default.json'), 'utf8')) as Json;
  if (env.EBBGATE_CONFIG) raw = deepMerge(raw, JSON.parse(readFileSync(env.EBBGATE_CONFIG, 'utf8')) as Json);
  const fromEnv: Json = {};
  for (const [name, target] of Object.entries(ENV_MAP)) {
    const value = env[name];
    if (value !== undefined && value !== '') setPath(fromEnv, target.path, parseEnvValue(name, value, target.type));
  }
  raw = deepMerge(raw, fromEnv);
  raw = deepMerge(raw, overrides);
  raw.env = env.NODE_ENV === 'production' ? 'production' : env.NODE_ENV === 'test' ? 'test' : 'development';

  const parsed = configSchema.safeParse(raw);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.') || '(root)'}: ${i.message}`);
    throw new ConfigError(`invalid configuration:\n${lines.join('\n')}`);
  }
  refuseInsecureInProduction(parsed.data);
  consoleDirAbsolute(parsed.data);
  return Object.freeze(parsed.data);
}

/** In production the EHR is reached over TLS only (its OAuth token and PHI must not cross the network in clear). */
function refuseInsecureInProduction(config: Config): void {
  if (config.env !== 'production') return;
  const plain = (['fhirBaseUrl', 'tokenUrl'] as const).filter((k) => new URL(config.ehr[k]).protocol !== 'https:');
  if (plain.length) throw new ConfigError(`invalid configuration:\n${plain.map((k) => `  ehr.${k}: must be an https:// URL in production`).join('\n')}`);
}

function consoleDirAbsolute(config: Config): void {
  if (!path.isAbsolute(config.gateway.consoleDir)) config.gateway.consoleDir = path.join(repoRoot, config.gateway.consoleDir);
}
