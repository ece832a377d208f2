/**
 * `npm test`: every suite of every workspace against a throwaway MariaDB, then one closing line
 * `N passed, N failed`. Installs what the suites need when missing (MariaDB server, Chromium).
 * Extra arguments go to vitest, e.g. `npm test -- --project gateway`.
 */
import { execFileSync, spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../gateway/src/config/load';
import { ensureConsoleBuilt } from './lib/console-build';
import { startTestMariaDb } from './lib/test-mariadb';

const log = (m: string) => console.log(m);

function ensureChromium(): void {
  if (existsSync('/usr/bin/chromium')) return;
  const command = 'apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y chromium';
  if (process.getuid?.() !== 0) throw new Error(`Chromium is needed for the console tests. Run as root:\n  sudo sh -c '${command}'`);
  log('ebbgate: installing Debian chromium for the console tests (apt-get)…');
  execFileSync('sh', ['-c', command], { stdio: 'inherit' });
}

interface VitestJson {
  numPassedTests: number;
  numFailedTests: number;
  numPendingTests: number;
  numTodoTests: number;
  testResults: { status: string; name: string; message?: string }[];
}

async function main(): Promise<number> {
  ensureChromium();
  ensureConsoleBuilt(log);
  let stopDb: (() => Promise<void>) | undefined;
  const env: NodeJS.ProcessEnv = { ...process.env, NODE_ENV: 'test' };
  if (process.env.DATABASE_URL) {
    env.EBBGATE_TEST_ADMIN_URL = process.env.DATABASE_URL;
  } else {
    log('ebbgate: starting a throwaway MariaDB for the tests…');
    const { server, adminUrl } = await startTestMariaDb(log);
    env.EBBGATE_TEST_ADMIN_URL = adminUrl;
    stopDb = () => server.stop();
  }
  const resultsDir = path.join(repoRoot, 'tests/.results');
  mkdirSync(resultsDir, { recursive: true });
  const jsonFile = path.join(resultsDir, 'vitest.json');
  const args = ['run', '--reporter=default', '--reporter=json', `--outputFile.json=${jsonFile}`, ...process.argv.slice(2)];
  const code = await new Promise<number>((resolve) => {
    const child = spawn(path.join(repoRoot, 'node_modules/.bin/vitest'), args, { cwd: repoRoot, env, stdio: 'inherit' });
    const forward = (sig: NodeJS.Signals) => child.kill(sig);
    process.on('SIGINT', forward);
    process.on('SIGTERM', forward);
    child.on('exit', (c, sig) => resolve(c ?? (sig ? 1 : 0)));
  });
  await stopDb?.();
  let passed = 0;
  let failed = 0;
  if (existsSync(jsonFile)) {
    const r = JSON.parse(readFileSync(jsonFile, 'utf8')) as VitestJson;
    passed = r.numPassedTests;
    // A suite that fails to load has no tests in it but is a failure all the same.
    failed = r.numFailedTests + r.testResults.filter((t) => t.status === 'failed' && t.message).length;
  } else if (code !== 0) failed = 1;
  console.log(`\n${passed} passed, ${failed} failed`);
  return code !== 0 || failed > 0 ? 1 : 0;
}

process.exitCode = await main();
