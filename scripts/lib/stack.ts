/**
 * The whole local stack in one process: mock EHR (FHIR, token, SMTP catcher, HL7 receiver),
 * the gateway (API, console, MLLP listener, workers) and, for the demo, the bedside simulator.
 * Used by `npm start` (scripts/start.ts) and by the end-to-end tests (tests/src/support/stack.ts).
 */
import path from 'node:path';
import { startMockEhr, type RunningMockEhr } from '@ebbgate/mock-ehr';
import { deepMerge, loadConfig, repoRoot } from '../../gateway/src/config/load';
import type { Config } from '../../gateway/src/config/schema';
import { createLogger } from '../../gateway/src/http/logger';
import { startGateway, type RunningGateway } from '../../gateway/src/server';

export interface StackOptions {
  databaseUrl: string;
  /** The migration user's URL (DDL); the gateway itself runs as `databaseUrl` (data privileges only). */
  migrationDatabaseUrl?: string;
  jwtSecret: string;
  /** 0 = any free port. */
  gatewayPort: number;
  mllpPort: number;
  mockEhrPort: number;
  smtpPort: number;
  hl7ReceiverPort: number;
  nodeEnv?: 'development' | 'test';
  logLevel?: string;
  /** Gateway log file (JSON lines); stdout when absent. */
  logFile?: string;
  /** Extra config for the gateway (deep-merged last). */
  overrides?: Record<string, unknown>;
  log?: (m: string) => void;
}

export interface RunningStack {
  gatewayUrl: string;
  mockEhrUrl: string;
  mockEhr: RunningMockEhr;
  gateway: RunningGateway;
  config: Config;
  stop(): Promise<void>;
}

export const CONSOLE_DIR = path.join(repoRoot, 'admin-ui/dist');

export async function launchStack(opts: StackOptions): Promise<RunningStack> {
  const log = opts.log ?? (() => {});
  const quiet = { info: () => {}, warn: (m: string) => log(m), error: (m: string) => log(m) };
  const mockEhr = await startMockEhr({ host: '127.0.0.1', httpPort: opts.mockEhrPort, smtpPort: opts.smtpPort, mllpPort: opts.hl7ReceiverPort, logger: quiet });
  let gateway: RunningGateway;
  let config: Config;
  try {
    config = loadConfig(
      { NODE_ENV: opts.nodeEnv ?? 'development' },
      deepMerge(
        {
          database: { url: opts.databaseUrl, migrationUrl: opts.migrationDatabaseUrl ?? null },
          gateway: { port: opts.gatewayPort, consoleDir: CONSOLE_DIR, migrateOnStart: true, seedDemo: true },
          auth: { jwtSecret: opts.jwtSecret },
          log: { level: opts.logLevel ?? 'warn' },
          mllp: { port: opts.mllpPort },
          ehr: { fhirBaseUrl: mockEhr.fhirBaseUrl, tokenUrl: mockEhr.tokenUrl },
          mail: { smtpPort: mockEhr.smtpPort },
        },
        opts.overrides ?? {},
      ),
    );
    gateway = await startGateway({ config, logger: createLogger(config.log.level, opts.logFile), migrate: true, seedDemo: true, services: true });
  } catch (err) {
    await mockEhr.stop();
    throw err;
  }
  // publicUrl follows the real port when it was picked at random.
  const gatewayUrl = gateway.url;
  return {
    gatewayUrl,
    mockEhrUrl: mockEhr.baseUrl,
    mockEhr,
    gateway,
    config,
    stop: async () => {
      await gateway.stop();
      await mockEhr.stop();
    },
  };
}
