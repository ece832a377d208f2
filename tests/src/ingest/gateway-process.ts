/**
 * A gateway as its own OS process (`node --import tsx gateway/src/main.ts`), configured only
 * through the environment, for tests where several gateways share one database.
 *
 * Processes are started in their own process group and ended as a group: the `tsx` launcher runs
 * the program in a child of its own, so a SIGKILL of the launcher alone used to leave the gateway
 * running with parent pid 1. Every process carries EBBGATE_TEST_RUN (set by `npm test`) so the
 * run can check at the end that none is left, and any still alive when this test process exits
 * is killed.
 */
import { spawn, type ChildProcess, type SpawnOptions } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { repoRoot } from '@ebbgate/gateway/config/load';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

const live = new Set<ChildProcess>();
process.once('exit', () => {
  for (const c of live) killGroup(c, 'SIGKILL');
});

/** Signals the child's whole process group (it leads one: spawned detached). */
export function killGroup(child: ChildProcess, signal: NodeJS.Signals): void {
  if (child.pid === undefined) return;
  try {
    process.kill(-child.pid, signal);
  } catch {
    // the group is gone already
  }
}

/**
 * Spawns a TypeScript program under Node with tsx as a loader (one process, so its pid is the
 * program's), in its own process group, tracked until it exits.
 */
export function spawnTracked(script: string, args: string[], opts: SpawnOptions & { env: NodeJS.ProcessEnv }): ChildProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', script, ...args], {
    ...opts,
    detached: true,
    env: { ...opts.env, ...(process.env.EBBGATE_TEST_RUN ? { EBBGATE_TEST_RUN: process.env.EBBGATE_TEST_RUN } : {}) },
  });
  live.add(child);
  child.once('exit', () => live.delete(child));
  return child;
}

/** Ends a tracked process: SIGTERM to its group, SIGKILL after `graceMs`; resolves once it exited. */
export function endProcess(child: ChildProcess, graceMs = 15_000): Promise<void> {
  return new Promise<void>((resolve) => {
    if (child.exitCode !== null || child.signalCode !== null) {
      killGroup(child, 'SIGKILL'); // anything it left in its group
      return resolve();
    }
    const force = setTimeout(() => killGroup(child, 'SIGKILL'), graceMs);
    child.once('exit', () => {
      clearTimeout(force);
      killGroup(child, 'SIGKILL');
      resolve();
    });
    killGroup(child, 'SIGTERM');
  });
}

export interface GatewayProcess {
  url: string;
  mllpPort: number | null;
  child: ChildProcess;
  output(): string;
  stop(): Promise<void>;
}

export async function spawnGateway(opts: {
  databaseUrl: string;
  jwtSecret: string;
  mllp?: boolean;
  workers?: boolean;
  env?: Record<string, string>;
  port?: number;
  mllpPort?: number;
}): Promise<GatewayProcess> {
  const port = opts.port ?? (await freePort());
  const mllpPort = opts.mllp ? (opts.mllpPort ?? (await freePort())) : null;
  const child = spawnTracked(path.join(repoRoot, 'gateway/src/main.ts'), [], {
    cwd: repoRoot,
    env: {
      PATH: process.env.PATH ?? '',
      HOME: process.env.HOME ?? '/tmp',
      NODE_ENV: 'test',
      DATABASE_URL: opts.databaseUrl,
      EBBGATE_PORT: String(port),
      EBBGATE_JWT_SECRET: opts.jwtSecret,
      EBBGATE_MIGRATE_ON_START: 'true',
      EBBGATE_SEED_DEMO: 'true',
      EBBGATE_MLLP_ENABLED: opts.mllp ? 'true' : 'false',
      EBBGATE_MLLP_PORT: String(mllpPort ?? 0),
      EBBGATE_WORKERS: opts.workers === false ? 'false' : 'true',
      EBBGATE_LOG_LEVEL: 'warn',
      // Keep the delivery worker away from any real EHR port.
      EBBGATE_EHR_FHIR_URL: 'http://127.0.0.1:9/fhir',
      EBBGATE_EHR_TOKEN_URL: 'http://127.0.0.1:9/token',
      ...opts.env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d: Buffer) => (out = (out + d.toString()).slice(-20_000)));
  child.stderr!.on('data', (d: Buffer) => (out = (out + d.toString()).slice(-20_000)));
  const url = `http://127.0.0.1:${port}`;
  const until = Date.now() + 60_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`gateway exited with ${child.exitCode}:\n${out}`);
    if (Date.now() > until) {
      await endProcess(child, 2000);
      throw new Error(`gateway did not start:\n${out}`);
    }
    try {
      const r = await fetch(`${url}/readyz`);
      if (r.status === 200 || r.status === 503) break;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return {
    url,
    mllpPort,
    child,
    output: () => out,
    stop: () => endProcess(child),
  };
}

export interface ConfiguredGateway {
  gw: GatewayProcess;
  db: TestDatabase;
  /** The temporary folder holding config.json (and whatever the caller put there); removed by stop(). */
  dir: string;
  stop(): Promise<void>;
}

/**
 * A gateway process on a throwaway database with `config` as its config file (EBBGATE_CONFIG in
 * a temporary folder, `dir` if the caller made one), migrations run by the migration user and the
 * gateway on the data-only one (unless `databaseUrl` says otherwise). Everything it made is
 * removed again if the gateway does not come up, and by stop().
 */
export async function spawnConfiguredGateway(
  config: object,
  opts: {
    dir?: string;
    port?: number;
    mllp?: boolean;
    mllpPort?: number;
    workers?: boolean;
    env?: Record<string, string>;
    databaseUrl?: (db: TestDatabase) => string;
  } = {},
): Promise<ConfiguredGateway> {
  const dir = opts.dir ?? mkdtempSync(path.join(os.tmpdir(), 'ebbgate-gw-'));
  const file = path.join(dir, 'config.json');
  writeFileSync(file, JSON.stringify(config));
  let db: TestDatabase | undefined;
  try {
    db = await createTestDatabase();
    const gw = await spawnGateway({
      databaseUrl: opts.databaseUrl ? opts.databaseUrl(db) : db.runtimeUrl,
      jwtSecret: randomBytes(32).toString('hex'),
      port: opts.port,
      mllp: opts.mllp,
      mllpPort: opts.mllpPort,
      workers: opts.workers,
      env: { EBBGATE_CONFIG: file, DATABASE_MIGRATION_URL: db.url, ...opts.env },
    });
    const made = db;
    return {
      gw,
      db: made,
      dir,
      stop: async () => {
        await gw.stop();
        await made.drop();
        rmSync(dir, { recursive: true, force: true });
      },
    };
  } catch (err) {
    await db?.drop();
    rmSync(dir, { recursive: true, force: true });
    throw err;
  }
}

/** A signed-in person over plain fetch: session cookie plus the CSRF header on changes. */
export async function signIn(url: string, username: string, password: string) {
  const res = await fetch(`${url}/api/v1/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ username, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in ${res.status}: ${await res.text()}`);
  const cookie = res.headers
    .getSetCookie()
    .map((c) => c.split(';')[0])
    .join('; ');
  const { csrfToken } = (await res.json()) as { csrfToken: string };
  const call = async (method: string, p: string, body?: unknown) => {
    const r = await fetch(`${url}/api/v1${p}`, {
      method,
      headers: { cookie, 'x-csrf-token': csrfToken, ...(body ? { 'content-type': 'application/json' } : {}) },
      body: body ? JSON.stringify(body) : undefined,
    });
    const text = await r.text();
    return { status: r.status, body: text ? (JSON.parse(text) as any) : undefined }; // eslint-disable-line @typescript-eslint/no-explicit-any
  };
  return {
    get: (p: string) => call('GET', p),
    post: (p: string, b?: unknown) => call('POST', p, b ?? {}),
    put: (p: string, b: unknown) => call('PUT', p, b),
    patch: (p: string, b: unknown) => call('PATCH', p, b),
  };
}

export const DEMO_INTEGRATOR = { username: 'ivo.integrator', password: 'Harrowmere-integrator-1' };
