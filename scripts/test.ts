/**
 * `npm test`: every suite of every workspace against a throwaway MariaDB, then one closing line
 * `N passed, N failed`. Installs what the suites need when missing (MariaDB server, Chromium).
 * Extra arguments go to vitest, e.g. `npm test -- --project gateway`.
 *
 * At the end it checks that no process the tests started is left: vitest runs in a session of its
 * own, and every process the test helpers spawn carries EBBGATE_TEST_RUN=<this run>; anything
 * still alive in that session or with that mark is listed, killed, and fails the run.
 */
import { execFileSync, spawn } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { existsSync, mkdirSync, readdirSync, readFileSync, readlinkSync } from 'node:fs';
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

interface Leftover {
  pid: number;
  ppid: number;
  command: string;
  cwd: string;
}

/** Processes in the given session, or carrying the run's mark in their environment (Linux /proc). */
export function leftoverProcesses(sessionId: number | undefined, runId: string): Leftover[] {
  const out: Leftover[] = [];
  for (const name of readdirSync('/proc')) {
    const pid = Number(name);
    if (!Number.isInteger(pid) || pid === process.pid) continue;
    try {
      const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
      // pid (comm) state ppid pgrp session …: comm may hold spaces, so split after the last ')'.
      const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      const ppid = Number(fields[1]);
      const session = Number(fields[3]);
      if (fields[0] === 'Z') continue; // a zombie holds no resources; its parent reaps it
      let marked = false;
      try {
        marked = readFileSync(`/proc/${pid}/environ`, 'utf8').split('\0').includes(`EBBGATE_TEST_RUN=${runId}`);
      } catch {
        // not ours to read
      }
      if (!marked && !(sessionId !== undefined && session === sessionId)) continue;
      const command = readFileSync(`/proc/${pid}/cmdline`, 'utf8').split('\0').join(' ').trim();
      let cwd = '?';
      try {
        cwd = readlinkSync(`/proc/${pid}/cwd`);
      } catch {
        // gone meanwhile
      }
      out.push({ pid, ppid, command, cwd });
    } catch {
      // the process ended while we looked
    }
  }
  return out;
}

/** Gives stragglers a moment to finish exiting, then lists, kills and reports what is left. */
async function checkNoProcessLeft(sessionId: number | undefined, runId: string): Promise<number> {
  let left = leftoverProcesses(sessionId, runId);
  for (let i = 0; i < 20 && left.length; i++) {
    await new Promise((r) => setTimeout(r, 250));
    left = leftoverProcesses(sessionId, runId);
  }
  if (!left.length) {
    log('ebbgate: no process started by the tests is left running.');
    return 0;
  }
  console.error(`ebbgate: ${left.length} process(es) started by the tests were still running after them (a test did not end what it spawned):`);
  for (const p of left) {
    console.error(`  pid ${p.pid} (parent ${p.ppid}) cwd ${p.cwd}: ${p.command.slice(0, 300)}`);
    try {
      process.kill(p.pid, 'SIGKILL');
    } catch {
      // already gone
    }
  }
  return left.length;
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
  const runId = randomUUID();
  const env: NodeJS.ProcessEnv = { ...process.env, NODE_ENV: 'test', EBBGATE_TEST_RUN: runId };
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
  let sessionId: number | undefined;
  const code = await new Promise<number>((resolve) => {
    // detached: vitest leads a session of its own, so whatever the tests start (and do not move
    // into a session of their own) can be found afterwards.
    const child = spawn(path.join(repoRoot, 'node_modules/.bin/vitest'), args, { cwd: repoRoot, env, stdio: 'inherit', detached: true });
    sessionId = child.pid;
    const forward = (sig: NodeJS.Signals) => child.kill(sig);
    process.on('SIGINT', forward);
    process.on('SIGTERM', forward);
    child.on('exit', (c, sig) => resolve(c ?? (sig ? 1 : 0)));
  });
  await stopDb?.();
  const leftovers = await checkNoProcessLeft(sessionId, runId);
  let passed = 0;
  let failed = 0;
  if (existsSync(jsonFile)) {
    const r = JSON.parse(readFileSync(jsonFile, 'utf8')) as VitestJson;
    passed = r.numPassedTests;
    // A suite that fails to load has no tests in it but is a failure all the same.
    failed = r.numFailedTests + r.testResults.filter((t) => t.status === 'failed' && t.message).length;
  } else if (code !== 0) failed = 1;
  if (leftovers) failed += 1;
  console.log(`\n${passed} passed, ${failed} failed${leftovers ? ` (including ${leftovers} process(es) left running)` : ''}`);
  return code !== 0 || failed > 0 ? 1 : 0;
}

process.exitCode = await main();
