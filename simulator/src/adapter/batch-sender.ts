import type { IngestBatch } from '@ebbgate/shared';
import { DEFAULT_RETRY_POLICY, nextDelay, type RetryPolicy } from './retry-policy';
import { BatchSpool, DEFAULT_REJECTED_LIMITS, type RejectedLimits } from './spool';
import type { BatchTransport, SendOutcome } from './transport';

export type SenderEvent =
  | { kind: 'accepted'; monitorId: string; batchId: string; status: number; repeat: boolean; attempts: number }
  | { kind: 'retrying'; monitorId: string; batchId: string; attempt: number; delayMs: number; reason: string; status?: number; retryAfterMs?: number }
  | { kind: 'rejected'; monitorId: string; batchId: string; reason: string; status?: number; answer?: unknown; spoolFile: string }
  | { kind: 'replaying'; batches: number; monitors: number }
  | { kind: 'unreadable'; file: string; error: string };

export interface BatchSenderOptions {
  transport: BatchTransport;
  /** Folder for unsent batches (one sub-folder per monitor). */
  spoolDir: string;
  /**
   * `always` (default): a batch is on disk before its first attempt, so a crash loses nothing.
   * `on-failure`: a batch goes to disk only once an attempt failed or at close (load tests).
   */
  spoolMode?: 'always' | 'on-failure';
  /** fsync each spool file (default true). */
  fsync?: boolean;
  retry?: Partial<RetryPolicy>;
  onEvent?: (e: SenderEvent) => void;
  /** Source of jitter, for tests. */
  random?: () => number;
  /** Cap and age limit of `rejected/` per monitor (default 1000 batches, 30 days). */
  rejected?: Partial<RejectedLimits>;
}

interface Entry {
  batch: IngestBatch;
  seq: number;
  file: string | null;
  attempts: number;
  /** Resolves once the spool file is written (always mode); `writeError` is set if that failed. */
  written?: Promise<void>;
  writeError?: unknown;
}

export interface SenderStats {
  accepted: number;
  repeats: number;
  retries: number;
  rejected: number;
  /** Refused batches removed from `rejected/` by its cap or age limit. */
  rejectedDropped: number;
}

/**
 * The adapter's outbox: a queue per monitor, sent strictly in order (the gateway detects gaps and
 * overlaps between consecutive batches, so order matters), retried with backoff and Retry-After,
 * backed by a disk spool that is replayed on the next start.
 */
export class BatchSender {
  private readonly counts = { accepted: 0, repeats: 0, retries: 0, rejected: 0 };
  private readonly queues = new Map<string, Entry[]>();
  private readonly pumps = new Map<string, Promise<void>>();
  private readonly sleepers = new Set<() => void>();
  private drainWaiters: (() => void)[] = [];
  private closed = false;
  private readonly policy: RetryPolicy;
  private readonly mode: 'always' | 'on-failure';

  /** What happened so far (the spool's own count of refused batches it aged out or capped included). */
  get stats(): SenderStats {
    return { ...this.counts, rejectedDropped: this.spool.rejectedDropped };
  }

  private constructor(
    private readonly opts: BatchSenderOptions,
    private readonly spool: BatchSpool,
  ) {
    this.policy = { ...DEFAULT_RETRY_POLICY, ...opts.retry };
    this.mode = opts.spoolMode ?? 'always';
  }

  /** Opens the spool and starts replaying whatever an earlier run left there, in order. */
  static async open(opts: BatchSenderOptions): Promise<BatchSender> {
    const spool = new BatchSpool(opts.spoolDir, opts.fsync ?? true, { ...DEFAULT_REJECTED_LIMITS, ...opts.rejected });
    const sender = new BatchSender(opts, spool);
    const { batches, unreadable } = await spool.load();
    for (const u of unreadable) opts.onEvent?.({ kind: 'unreadable', ...u });
    if (batches.length) opts.onEvent?.({ kind: 'replaying', batches: batches.length, monitors: new Set(batches.map((b) => b.monitorId)).size });
    for (const b of batches) sender.enqueue({ batch: b.batch, seq: b.seq, file: b.file, attempts: 0 });
    return sender;
  }

  /** Queues a batch; resolves once it is safely queued (on disk in `always` mode), not when sent. */
  async send(batch: IngestBatch): Promise<void> {
    if (this.closed) throw new Error('BatchSender is closed');
    // Queued synchronously, so the send order is the call order even when calls overlap.
    const seq = this.spool.reserveSeq(batch.monitorId);
    if (this.mode === 'on-failure') return this.enqueue({ batch, seq, file: null, attempts: 0 });
    const e: Entry = { batch, seq, file: this.spool.fileFor(batch.monitorId, seq), attempts: 0 };
    e.written = this.spool.putAt(batch, seq).then(
      () => undefined,
      (err: unknown) => {
        e.writeError = err;
      },
    );
    this.enqueue(e);
    await e.written;
    if (e.writeError) throw e.writeError;
  }

  /** Batches not yet accepted or rejected (one monitor, or all). */
  pending(monitorId?: string): number {
    if (monitorId !== undefined) return this.queues.get(monitorId)?.length ?? 0;
    let n = 0;
    for (const q of this.queues.values()) n += q.length;
    return n;
  }

  /** Resolves when every queue is empty (or rejects after timeoutMs). */
  drain(timeoutMs = 60_000): Promise<void> {
    if (this.pending() === 0) return Promise.resolve();
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`drain: ${this.pending()} batches still pending after ${timeoutMs} ms`)), timeoutMs);
      this.drainWaiters.push(() => {
        clearTimeout(timer);
        resolve();
      });
    });
  }

  /** Stops sending; whatever is unsent stays (or is written) in the spool for the next start. */
  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    for (const wake of this.sleepers) wake();
    await Promise.all(this.pumps.values());
    for (const q of this.queues.values()) for (const e of q) await this.persist(e);
    await this.opts.transport.close?.();
  }

  private enqueue(e: Entry): void {
    const id = e.batch.monitorId;
    let q = this.queues.get(id);
    if (!q) this.queues.set(id, (q = []));
    q.push(e);
    if (!this.pumps.has(id) && !this.closed) this.pumps.set(id, this.pump(id));
  }

  private async persist(e: Entry): Promise<void> {
    if (e.file) return;
    e.file = (await this.spool.putAt(e.batch, e.seq)).file;
  }

  private async pump(monitorId: string): Promise<void> {
    const q = this.queues.get(monitorId)!;
    while (q.length && !this.closed) {
      const e = q[0];
      if (e.written) await e.written;
      if (e.writeError) {
        q.shift(); // never on disk: the caller of send() got the error and still holds the batch
        continue;
      }
      const outcome: SendOutcome = await this.opts.transport
        .send(e.batch)
        .catch((err: unknown) => ({ kind: 'retry' as const, reason: `transport error: ${String(err)}` }));
      e.attempts++;
      const ids = { monitorId, batchId: e.batch.batchId };
      if (outcome.kind === 'accepted') {
        q.shift();
        if (e.file) await this.spool.remove({ file: e.file });
        this.counts.accepted++;
        if (outcome.repeat) this.counts.repeats++;
        this.opts.onEvent?.({ kind: 'accepted', ...ids, status: outcome.status, repeat: outcome.repeat, attempts: e.attempts });
      } else if (outcome.kind === 'rejected') {
        q.shift();
        const spoolFile = await this.spool.reject({ monitorId, seq: e.seq, file: e.file ?? this.spool.fileFor(monitorId, e.seq), batch: e.batch }, outcome);
        this.counts.rejected++;
        this.opts.onEvent?.({ kind: 'rejected', ...ids, reason: outcome.reason, status: outcome.status, answer: outcome.answer, spoolFile });
      } else {
        // The gateway is away: everything behind this batch goes to disk too, in order.
        for (const x of q) await this.persist(x);
        this.counts.retries++;
        const delayMs = nextDelay(this.policy, e.attempts, outcome.retryAfterMs, this.opts.random);
        this.opts.onEvent?.({
          kind: 'retrying',
          ...ids,
          attempt: e.attempts,
          delayMs,
          reason: outcome.reason,
          status: outcome.status,
          retryAfterMs: outcome.retryAfterMs,
        });
        await this.sleep(delayMs);
      }
      if (this.pending() === 0) this.wakeDrainers();
    }
    // Synchronous with the loop's last check, so a batch queued from now on starts a new pump.
    this.pumps.delete(monitorId);
  }

  private wakeDrainers(): void {
    const w = this.drainWaiters;
    this.drainWaiters = [];
    for (const f of w) f();
  }

  private sleep(ms: number): Promise<void> {
    return new Promise((resolve) => {
      const done = () => {
        clearTimeout(t);
        this.sleepers.delete(done);
        resolve();
      };
      const t = setTimeout(done, ms);
      this.sleepers.add(done);
    });
  }
}
