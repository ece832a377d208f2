import { DEFAULT_HOSPITAL_FILE } from './seed/hospital-file.js';

/** Something with pino's basic methods; the mock is silent without one. */
export interface MockEhrLogger {
  info(msg: string): void;
  warn(msg: string): void;
  error(msg: string): void;
}

export interface MockEhrOptions {
  host?: string;
  /** 0 picks a free port; the real one is returned. */
  httpPort?: number;
  smtpPort?: number;
  mllpPort?: number;
  seedFile?: string;
  clientId?: string;
  clientSecret?: string;
  tokenTtlSeconds?: number;
  logger?: MockEhrLogger;
}

export const MOCK_EHR_DEFAULTS = {
  host: '127.0.0.1',
  httpPort: 8481,
  smtpPort: 2526,
  mllpPort: 2577,
  seedFile: DEFAULT_HOSPITAL_FILE,
  clientId: 'ebbgate-gateway',
  // A development secret for a local fake; never a real credential.
  clientSecret: 'mock-ehr-dev-secret',
  tokenTtlSeconds: 300,
} as const;

export type ResolvedOptions = Required<Omit<MockEhrOptions, 'logger'>> & { logger: MockEhrLogger };

const silent: MockEhrLogger = { info() {}, warn() {}, error() {} };

export function resolveOptions(opts: MockEhrOptions = {}): ResolvedOptions {
  const pick = <K extends keyof typeof MOCK_EHR_DEFAULTS>(k: K) =>
    (opts[k] ?? MOCK_EHR_DEFAULTS[k]) as (typeof MOCK_EHR_DEFAULTS)[K] extends number ? number : string;
  return {
    host: pick('host'),
    httpPort: pick('httpPort'),
    smtpPort: pick('smtpPort'),
    mllpPort: pick('mllpPort'),
    seedFile: pick('seedFile'),
    clientId: pick('clientId'),
    clientSecret: pick('clientSecret'),
    tokenTtlSeconds: pick('tokenTtlSeconds'),
    logger: opts.logger ?? silent,
  };
}
