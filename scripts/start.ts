/**
 * `npm start`: fresh clone → running Ebbgate. Runs on the compiled build (`npm start` builds first
 * when a source is newer than the last build). Starts a private MariaDB in .data/mariadb (unless
 * DATABASE_URL is set; a server left running by an earlier start that died is adopted or stopped
 * first), then the mock EHR, the gateway and the bedside simulator, each as its own Node process
 * (a crashed part is restarted; the others keep running). Ctrl-C stops everything.
 */
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../gateway/src/config/load';
import { readDemoUsers } from '../gateway/src/seed/demo-users';
import { startPrivateMariaDb, type PrivateMariaDb } from './lib/mariadb';
import { DEMO_OVERRIDES } from './lib/demo';
import { ensureDemoCertificates, tlsFiles } from './lib/certs';
import { httpAnswers, ipcMessage, supervise, type Supervised } from './lib/supervisor';

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

const dist = (rel: string) => path.join(repoRoot, rel);

async function main() {
  // EBBGATE_DATA_DIR: another folder than .data (the launcher's own tests use a temporary one).
  const dataDir = env.EBBGATE_DATA_DIR ? path.resolve(env.EBBGATE_DATA_DIR) : path.join(repoRoot, '.data');
  const secrets = localSecrets(dataDir);
  let db: PrivateMariaDb | undefined;
  let databaseUrl = env.DATABASE_URL;
  // The gateway runs as a data-only user; migrations run as DATABASE_MIGRATION_URL (or the private DB's migration user).
  let migrationUrl = env.DATABASE_MIGRATION_URL;
  const parts: Supervised[] = [];
  let stopping = false;
  const stopAll = async (code: number) => {
    if (stopping) return;
    stopping = true;
    log('\nebbgate: stopping…');
    for (const p of [...parts].reverse()) await p.stop().catch((e) => log(`${p.name}: ${String(e)}`));
    await db?.stop();
    log('ebbgate: stopped.');
    process.exit(code);
  };
  process.once('SIGINT', () => void stopAll(0));
  process.once('SIGTERM', () => void stopAll(0));

  const gatewayPort = port('EBBGATE_PORT', 8480);
  const mockEhrPort = port('EBBGATE_MOCK_EHR_PORT', 8481);
  const smtpPort = port('EBBGATE_SMTP_PORT', 2526);
  const mllpPort = port('EBBGATE_MLLP_PORT', 2575);
  const gatewayUrl = `http://127.0.0.1:${gatewayPort}`;
  const mockEhrUrl = `http://127.0.0.1:${mockEhrPort}`;
  const simulatorOn = env.EBBGATE_SIMULATOR !== 'off';
  try {
    if (!databaseUrl) {
      const dbPort = port('EBBGATE_DB_PORT', 3307);
      log(`ebbgate: starting private MariaDB on 127.0.0.1:${dbPort} (data in ${path.relative(repoRoot, dataDir) || '.'}/mariadb)…`);
      db = await startPrivateMariaDb({ dataDir: path.join(dataDir, 'mariadb'), port: dbPort, password: secrets.databasePassword, leftover: 'adopt', log });
      databaseUrl = db.appUrl;
      migrationUrl = db.migrationUrl;
    }
    writeFileSync(path.join(dataDir, 'database-url'), databaseUrl, { mode: 0o600 });

    const mockEhr = supervise(
      {
        name: 'mock EHR',
        script: dist('mock-ehr/dist/main.js'),
        env: {
          MOCK_EHR_HTTP_PORT: String(mockEhrPort),
          MOCK_EHR_SMTP_PORT: String(smtpPort),
          MOCK_EHR_MLLP_PORT: String(port('EBBGATE_HL7_RECEIVER_PORT', 2577)),
        },
        logFile: path.join(dataDir, 'logs/mock-ehr.log'),
        ready: () => httpAnswers(`${mockEhrUrl}/mail`),
      },
      log,
    );
    parts.push(mockEhr);
    await mockEhr.start();

    // The gateway's config (with the local secrets) in a private file; the environment still wins.
    const configFile = path.join(dataDir, 'gateway.config.json');
    writeFileSync(
      configFile,
      JSON.stringify(
        {
          database: { url: databaseUrl, migrationUrl: migrationUrl ?? null },
          gateway: { port: gatewayPort, publicUrl: gatewayUrl, migrateOnStart: true, seedDemo: true },
          auth: { jwtSecret: env.EBBGATE_JWT_SECRET ?? secrets.jwtSecret },
          log: { level: env.EBBGATE_LOG_LEVEL ?? 'info' },
          // MLLP over TLS with the demo CA's certificates (made on first start under .data/certs).
          mllp: {
            port: mllpPort,
            tls: {
              enabled: true,
              port: port('EBBGATE_MLLP_TLS_PORT', 2576),
              ...tlsFiles(ensureDemoCertificates(path.join(dataDir, 'certs'), ['demo-simulator', 'load-simulator'])),
            },
          },
          ehr: { fhirBaseUrl: `${mockEhrUrl}/fhir`, tokenUrl: `${mockEhrUrl}/oauth/token` },
          mail: { smtpPort },
          ...(simulatorOn ? DEMO_OVERRIDES : {}),
        },
        null,
        2,
      ),
      { mode: 0o600 },
    );
    const gateway = supervise(
      {
        name: 'gateway',
        script: dist('gateway/dist/main.js'),
        env: { EBBGATE_CONFIG: configFile, NODE_ENV: 'development' },
        logFile: path.join(dataDir, 'logs/gateway.log'),
        ready: () => httpAnswers(`${gatewayUrl}/healthz`, 120_000),
        stopGraceMs: 20_000,
      },
      log,
    );
    parts.push(gateway);
    await gateway.start();

    if (simulatorOn) {
      const simulator = supervise(
        {
          name: 'simulator',
          script: dist('scripts/dist/demo-process.js'),
          env: { EBBGATE_GATEWAY_URL: gatewayUrl, EBBGATE_MOCK_EHR_URL: mockEhrUrl, EBBGATE_SPOOL_DIR: path.join(dataDir, 'spool') },
          ready: (child) => ipcMessage(child, 'ready').then(() => undefined),
        },
        log,
      );
      parts.push(simulator);
      await simulator.start();
    }
  } catch (err) {
    console.error(`ebbgate: could not start: ${(err as Error).stack ?? String(err)}`);
    await stopAll(1);
    return;
  }

  const users = readDemoUsers();
  const width = Math.max(...users.map((u) => u.username.length));
  log(`
Ebbgate is running (compiled build; one process each: ${parts.map((p) => `${p.name} pid ${p.pid()}`).join(', ')}).
  console and API   ${gatewayUrl}/          (API page: ${gatewayUrl}/api/docs)
  health            ${gatewayUrl}/readyz   metrics: ${gatewayUrl}/metrics
  MLLP listener     127.0.0.1:${mllpPort}
  mock EHR (FHIR)   ${mockEhrUrl}/fhir
  mail catcher      ${mockEhrUrl}/mail   (SMTP 127.0.0.1:${smtpPort})
  logs              .data/logs/gateway.log (JSON lines), .data/logs/mock-ehr.log
  database          ${db ? `private MariaDB on 127.0.0.1:${db.port}` : 'DATABASE_URL'}
  simulator         ${simulatorOn ? 'streaming the demo scenario' : 'off (EBBGATE_SIMULATOR=off)'}

Demo sign-ins (from config/demo/users.json; change them before any real use):
${users.map((u) => `  ${u.username.padEnd(width)}  ${u.password}  ${u.roles.join(', ')}`).join('\n')}

Press Ctrl-C to stop.`);
}

await main();
