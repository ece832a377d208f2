/**
 * The running stack for end-to-end tests: mock EHR + gateway (API, console, workers) on free
 * ports over a throwaway database. The console bundle is built by `npm test` before the suites.
 */
import { randomBytes } from 'node:crypto';
import { createTestDatabase } from '../../../scripts/lib/test-database';
import { ensureConsoleBuilt } from '../../../scripts/lib/console-build';
import { launchStack, type RunningStack } from '../../../scripts/lib/stack';

export interface E2eStack {
  gatewayUrl: string;
  mockEhrUrl: string;
  stack: RunningStack;
  stop(): Promise<void>;
}

export async function startStack(overrides: Record<string, unknown> = {}): Promise<E2eStack> {
  ensureConsoleBuilt(() => {});
  const db = await createTestDatabase();
  const stack = await launchStack({
    databaseUrl: db.runtimeUrl,
    migrationDatabaseUrl: db.url,
    jwtSecret: randomBytes(32).toString('hex'),
    gatewayPort: 0,
    mllpPort: 0,
    mockEhrPort: 0,
    smtpPort: 0,
    hl7ReceiverPort: 0,
    nodeEnv: 'test',
    logLevel: 'silent',
    overrides: { auth: { signInAttemptsPerMinute: 1000 }, gateway: { rateLimit: { perSourcePerMinute: 1_000_000, perKeyPerMinute: 1_000_000 } }, ...overrides },
  });
  return {
    gatewayUrl: stack.gatewayUrl,
    mockEhrUrl: stack.mockEhrUrl,
    stack,
    stop: async () => {
      await stack.stop();
      await db.drop();
    },
  };
}
