/**
 * Runs each part of the local stack (mock EHR, gateway, simulator) as its own Node process on the
 * compiled build, restarts a part that crashes (with backoff) so one crash does not take the others
 * down, and stops them in order. Children get an IPC channel: when the launcher itself dies
 * (SIGKILL), the channel closes and each child shuts itself down instead of living on as an orphan.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream, mkdirSync, type WriteStream } from 'node:fs';
import path from 'node:path';

/** Node flags for every runtime process: workspace packages from dist/, stack traces through the source maps. */
export const NODE_RUNTIME_FLAGS = ['--enable-source-maps', '--conditions=ebbgate-dist'];

export interface ChildSpec {
  name: string;
  /** Compiled entry file (absolute), run with `node NODE_RUNTIME_FLAGS`. */
  script?: string;
  /** Or a command line (from a systemd unit, or HAProxy); Node gets the IPC channel all the same. */
  command?: { file: string; args: string[] };
  env: Record<string, string>;
  /** Where stdout/stderr go: a log file (appended), or the launcher's console with a name prefix. */
  logFile?: string;
  /** Ready when this resolves (e.g. an HTTP probe); rejected = failed start. */
  ready?: (child: ChildProcess) => Promise<void>;
  /** Grace before SIGKILL when stopping. */
  stopGraceMs?: number;
}

export interface Supervised {
  name: string;
  pid(): number | undefined;
  /** Starts (again) and waits until ready. */
  start(): Promise<void>;
  stop(): Promise<void>;
}

export function supervise(spec: ChildSpec, log: (m: string) => void): Supervised {
  let child: ChildProcess | undefined;
  let stopping = false;
  let restarts: number[] = [];
  let out: WriteStream | undefined;
  if (spec.logFile) {
    mkdirSync(path.dirname(spec.logFile), { recursive: true });
    out = createWriteStream(spec.logFile, { flags: 'a' });
  }

  const prefix = (chunk: Buffer) => {
    for (const line of chunk.toString('utf8').split('\n'))
      if (line.trim()) log(line.startsWith(`${spec.name}:`) || line.startsWith('ebbgate:') ? line : `${spec.name}: ${line}`);
  };

  const launch = async (): Promise<void> => {
    const [file, args] = spec.command ? [spec.command.file, spec.command.args] : [process.execPath, [...NODE_RUNTIME_FLAGS, spec.script!]];
    const c = spawn(file, args, {
      env: { ...process.env, ...spec.env },
      stdio: file === process.execPath ? ['ignore', 'pipe', 'pipe', 'ipc'] : ['ignore', 'pipe', 'pipe'],
      // Own process group: a terminal Ctrl-C reaches only the launcher, which stops the parts in order.
      detached: true,
    });
    child = c;
    if (out) {
      c.stdout!.pipe(out, { end: false });
      c.stderr!.pipe(out, { end: false });
    } else {
      c.stdout!.on('data', prefix);
      c.stderr!.on('data', prefix);
    }
    c.once('exit', (code, signal) => {
      if (child === c) child = undefined;
      if (stopping) return;
      const now = Date.now();
      restarts = restarts.filter((t) => now - t < 60_000);
      const delay = Math.min(1000 * 2 ** restarts.length, 30_000);
      restarts.push(now);
      log(`ebbgate: ${spec.name} exited (${signal ?? `code ${code}`}); the other parts keep running; restarting it in ${delay / 1000} s`);
      setTimeout(() => {
        if (!stopping) launch().catch((err) => log(`ebbgate: ${spec.name} did not restart: ${String(err)}`));
      }, delay).unref();
    });
    if (spec.ready) {
      const exited = new Promise<never>((_, reject) =>
        c.once('exit', (code, signal) => reject(new Error(`${spec.name} exited during start (${signal ?? `code ${code}`})`))),
      );
      await Promise.race([spec.ready(c), exited]);
    }
  };

  return {
    name: spec.name,
    pid: () => child?.pid,
    start: () => {
      stopping = false;
      return launch();
    },
    stop: async () => {
      stopping = true;
      const c = child;
      if (c && c.exitCode === null && c.signalCode === null) {
        await new Promise<void>((resolve) => {
          const timer = setTimeout(() => c.kill('SIGKILL'), spec.stopGraceMs ?? 15_000);
          c.once('exit', () => {
            clearTimeout(timer);
            resolve();
          });
          c.kill('SIGTERM');
        });
      }
      await new Promise<void>((resolve) => (out ? out.end(resolve) : resolve()));
    },
  };
}

/** Resolves once `url` answers HTTP (any status below 500) or rejects after `timeoutMs`. */
export async function httpAnswers(url: string, timeoutMs = 60_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  let last = '';
  while (Date.now() < deadline) {
    try {
      const res = await fetch(url, { signal: AbortSignal.timeout(2000) });
      await res.arrayBuffer();
      if (res.status < 500) return;
      last = `HTTP ${res.status}`;
    } catch (err) {
      last = String(err);
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`${url} did not answer within ${timeoutMs} ms (${last})`);
}

/** Waits for the child's first IPC message of the given type (the simulator reports "ready" this way). */
export function ipcMessage(child: ChildProcess, type: string, timeoutMs = 120_000): Promise<Record<string, unknown>> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`no "${type}" message within ${timeoutMs} ms`)), timeoutMs);
    const onMessage = (m: unknown) => {
      if (m && typeof m === 'object' && (m as { type?: unknown }).type === type) {
        clearTimeout(timer);
        child.off('message', onMessage);
        resolve(m as Record<string, unknown>);
      }
    };
    child.on('message', onMessage);
  });
}
