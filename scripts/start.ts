/**
 * `npm start`: fresh clone → running Ebbgate. Starts a private MariaDB in .data/mariadb (unless
 * DATABASE_URL is set), migrates, seeds the demo scenario, builds the console, and runs the
 * mock EHR, the gateway and the bedside simulator in this process. Ctrl-C stops everything.
 */
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../gateway/src/config/load';
import { readDemoUsers } from '../gateway/src/seed/demo-users';
import { ensureConsoleBuilt } from './lib/console-build';
import { startPrivateMariaDb, type PrivateMariaDb } from './lib/mariadb';
import { launchStack, type RunningStack } from './lib/stack';
import { DEMO_OVERRIDES, startDemo } from './lib/demo';

const log = (m: string) => console.log(m);
const env = process.env;
const port = (name: string, fallback: number) => (env[name] ? Number(env[name]) : fallback);

interface Secrets {
  databasePassword: string;
  jwtSecret: string;
}

/** Generated once per checkout and kept in .data (git-ignored), so restarts keep sessions and the DB user. */
function localSecrets(dataDir: string): Secrets {
  const file = path.join(dataDir, 'secrets.json');
  if (existsSync(file)) return JSON.parse(readFileSync(file, 'utf8')) as Secrets;
  const secrets = { databasePassword: randomBytes(18).toString('base64url'), jwtSecret: randomBytes(32).toString('hex') };
  mkdirSync(dataDir, { recursive: true });
  writeFileSync(file, JSON.stringify(secrets, null, 2), { mode: 0o600 });
  return secrets;
}

async function main() {
  const dataDir = path.join(repoRoot, '.data');
  const secrets = localSecrets(dataDir);
  let db: PrivateMariaDb | undefined;
  let databaseUrl = env.DATABASE_URL;
  if (!databaseUrl) {
    const dbPort = port('EBBGATE_DB_PORT', 3307);
    log(`ebbgate: starting private MariaDB on 127.0.0.1:${dbPort} (data in .data/mariadb)…`);
    db = await startPrivateMariaDb({ dataDir: path.join(dataDir, 'mariadb'), port: dbPort, password: secrets.databasePassword, log });
    databaseUrl = db.appUrl;
  }
  writeFileSync(path.join(dataDir, 'database-url'), databaseUrl, { mode: 0o600 });

  let stack: RunningStack | undefined;
  let demo: { stop(): Promise<void> } | undefined;
  let stopping = false;
  const stopAll = async (code: number) => {
    if (stopping) return;
    stopping = true;
    log('\nebbgate: stopping…');
    await demo?.stop().catch((e) => log(`simulator: ${String(e)}`));
    await stack?.stop().catch((e) => log(`stack: ${String(e)}`));
    await db?.stop();
    log('ebbgate: stopped.');
    process.exit(code);
  };
  process.once('SIGINT', () => void stopAll(0));
  process.once('SIGTERM', () => void stopAll(0));

  try {
    ensureConsoleBuilt(log);
    stack = await launchStack({
      databaseUrl,
      jwtSecret: env.EBBGATE_JWT_SECRET ?? secrets.jwtSecret,
      gatewayPort: port('EBBGATE_PORT', 8480),
      mllpPort: port('EBBGATE_MLLP_PORT', 2575),
      mockEhrPort: port('EBBGATE_MOCK_EHR_PORT', 8481),
      smtpPort: port('EBBGATE_SMTP_PORT', 2526),
      hl7ReceiverPort: port('EBBGATE_HL7_RECEIVER_PORT', 2577),
      logLevel: env.EBBGATE_LOG_LEVEL ?? 'info',
      logFile: path.join(dataDir, 'logs/gateway.log'),
      overrides: env.EBBGATE_SIMULATOR === 'off' ? {} : DEMO_OVERRIDES,
      log,
    });
    if (env.EBBGATE_SIMULATOR !== 'off') demo = await startDemo(stack, path.join(dataDir, 'spool'), log);
  } catch (err) {
    console.error(`ebbgate: could not start: ${(err as Error).stack ?? String(err)}`);
    await stopAll(1);
    return;
  }

  const users = readDemoUsers();
  const width = Math.max(...users.map((u) => u.username.length));
  log(`
Ebbgate is running.
  console and API   ${stack.gatewayUrl}/          (API page: ${stack.gatewayUrl}/api/docs)
  health            ${stack.gatewayUrl}/readyz   metrics: ${stack.gatewayUrl}/metrics
  MLLP listener     127.0.0.1:${stack.config.mllp.port}
  mock EHR (FHIR)   ${stack.mockEhr.fhirBaseUrl}
  mail catcher      ${stack.mockEhrUrl}/mail   (SMTP 127.0.0.1:${stack.mockEhr.smtpPort})
  gateway log       .data/logs/gateway.log (JSON lines)
  database          ${db ? `private MariaDB on 127.0.0.1:${db.port}` : 'DATABASE_URL'}
  simulator         ${demo ? 'streaming the demo scenario' : 'off (EBBGATE_SIMULATOR=off)'}

Demo sign-ins (from config/demo/users.json; change them before any real use):
${users.map((u) => `  ${u.username.padEnd(width)}  ${u.password}  ${u.roles.join(', ')}`).join('\n')}

Press Ctrl-C to stop.`);
}

await main();
