/**
 * `npm start`'s launcher (scripts/dist/start.js, on the compiled build) after a crash: SIGKILL of the
 * launcher takes none of its parts along as orphans except its MariaDB, which the next start adopts;
 * a crashed gateway is restarted while the mock EHR keeps running; Ctrl-C (SIGINT) stops everything,
 * the adopted server too, and prints `ebbgate: stopped.`. Runs in a temporary data folder on free
 * ports, without the simulator.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { repoRoot } from '../../../gateway/src/config/load';
import { buildAll, buildIsStale } from '../../../scripts/build';
import { NODE_RUNTIME_FLAGS } from '../../../scripts/lib/supervisor';
import { freePort } from '../ingest/gateway-process';

interface Launcher {
  child: ChildProcess;
  output(): string;
}

const alive = (pid: number) => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};

async function until(what: string, ok: () => boolean | Promise<boolean>, timeoutMs: number, detail = () => ''): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await ok()) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`timed out waiting for ${what}\n${detail()}`);
}

describe('npm start launcher: crash, adopt, restart, stop', () => {
  let dataDir: string;
  let env: Record<string, string>;
  let gatewayUrl: string;
  const launchers: Launcher[] = [];
  const pids = new Set<number>();

  const launch = (): Launcher => {
    const child = spawn(process.execPath, [...NODE_RUNTIME_FLAGS, path.join(repoRoot, 'scripts/dist/start.js')], {
      cwd: repoRoot,
      env,
      stdio: ['ignore', 'pipe', 'pipe'],
      detached: true, // own process group, so cleanup can end the launcher and anything still in its group
    });
    let out = '';
    child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
    child.stderr!.on('data', (d: Buffer) => (out += d.toString()));
    const l = { child, output: () => out };
    launchers.push(l);
    return l;
  };

  const partPids = (out: string) => {
    const m = /one process each: mock EHR pid (\d+), gateway pid (\d+)/.exec(out);
    if (!m) throw new Error(`no process list in the launcher's output:\n${out}`);
    const p = { mockEhr: Number(m[1]), gateway: Number(m[2]) };
    pids.add(p.mockEhr).add(p.gateway);
    return p;
  };

  const mariadbPid = () => {
    const file = path.join(dataDir, 'mariadb.pid');
    expect(existsSync(file)).toBe(true);
    const pid = Number(readFileSync(file, 'utf8').trim());
    pids.add(pid);
    return pid;
  };

  beforeAll(async () => {
    if (buildIsStale()) await buildAll(() => {}, ['shared', 'gateway', 'mock-ehr', 'simulator', 'scripts']);
    dataDir = mkdtempSync(path.join(tmpdir(), 'ebbgate-launcher-'));
    const port = await freePort();
    gatewayUrl = `http://127.0.0.1:${port}`;
    env = {
      PATH: process.env.PATH ?? '',
      HOME: process.env.HOME ?? '/tmp',
      EBBGATE_DATA_DIR: dataDir,
      EBBGATE_SIMULATOR: 'off',
      EBBGATE_LOG_LEVEL: 'warn',
      EBBGATE_PORT: String(port),
      EBBGATE_MLLP_PORT: String(await freePort()),
      EBBGATE_MOCK_EHR_PORT: String(await freePort()),
      EBBGATE_SMTP_PORT: String(await freePort()),
      EBBGATE_HL7_RECEIVER_PORT: String(await freePort()),
      EBBGATE_DB_PORT: String(await freePort()),
    };
  });

  afterAll(async () => {
    for (const l of launchers) {
      if (l.child.exitCode === null && l.child.pid) {
        try {
          process.kill(-l.child.pid, 'SIGKILL');
        } catch {
          /* already gone */
        }
      }
    }
    for (const pid of pids) if (alive(pid)) process.kill(pid, 'SIGKILL');
    await until('every process to end', () => [...pids].every((p) => !alive(p)), 15_000).catch(() => undefined);
    if (dataDir) rmSync(dataDir, { recursive: true, force: true });
  });

  it('after SIGKILL of the launcher its parts stop; the next start adopts the MariaDB; a crashed gateway restarts; SIGINT stops all', async () => {
    const first = launch();
    await until('the first start', () => first.output().includes('Ebbgate is running'), 150_000, first.output);
    const firstParts = partPids(first.output());
    const db = mariadbPid();

    first.child.kill('SIGKILL');
    // Its own parts notice the closed IPC channel and stop; the MariaDB lives on (separate server process).
    await until('the orphaned parts to stop', () => !alive(firstParts.gateway) && !alive(firstParts.mockEhr), 20_000, first.output);
    expect(alive(db)).toBe(true);

    const second = launch();
    await until('the second start', () => second.output().includes('Ebbgate is running'), 150_000, second.output);
    expect(second.output()).toContain(`adopting the MariaDB left running by an earlier start (pid ${db}`);
    const parts = partPids(second.output());
    const ready = await fetch(`${gatewayUrl}/readyz`);
    expect(ready.status).toBe(200);
    const checks = ((await ready.json()) as { checks: { name: string; ok: boolean }[] }).checks;
    expect(checks.find((c) => c.name === 'database')?.ok).toBe(true);

    // One part crashing does not take the others: the gateway is restarted, the mock EHR keeps its pid.
    process.kill(parts.gateway, 'SIGKILL');
    await until('the launcher to report the crash', () => second.output().includes('gateway exited (SIGKILL)'), 10_000, second.output);
    await until(
      'the restarted gateway',
      async () => {
        try {
          return (await fetch(`${gatewayUrl}/healthz`)).status === 200;
        } catch {
          return false;
        }
      },
      90_000,
      second.output,
    );
    expect(alive(parts.mockEhr)).toBe(true);

    second.child.kill('SIGINT');
    await until('the launcher to exit after SIGINT', () => second.child.exitCode !== null, 60_000, second.output);
    expect(second.output()).toContain('ebbgate: stopped.');
    expect(second.child.exitCode).toBe(0);
    await until('the adopted MariaDB to stop', () => !alive(db), 30_000, second.output);
    expect(alive(parts.mockEhr)).toBe(false);
  }, 420_000);
});
