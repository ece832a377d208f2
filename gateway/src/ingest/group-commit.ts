/**
 * Group commit for ingest: batches that arrive within a few milliseconds of each other are stored
 * in one transaction on one connection and share one durable commit (innodb_flush_log_at_trx_commit=1
 * stays; each caller is answered only after the shared COMMIT returned). Each batch runs behind
 * its own SAVEPOINT, so a batch that fails (a repeat, a conflicting stream, bad data) is rolled
 * back alone and then stored on its own the usual way; if the shared transaction itself fails
 * (deadlock, certification failure, lost connection, failed COMMIT), every batch of the group is
 * stored again on its own, so one bad batch cannot fail its neighbours. A commit whose outcome
 * is unknown is safe to repeat: the batch key makes a second store a recorded duplicate.
 * Batches run in monitor order within a group, so groups take the monitors' row locks in one order.
 */
import type { DataSource, QueryRunner } from 'typeorm';
import type { StoreRequest, StoredBatch, StreamSettings } from './store-types';

interface Pending {
  req: StoreRequest;
  settings: StreamSettings;
  resolve(out: StoredBatch): void;
  reject(err: unknown): void;
}

export interface GroupCommitOptions {
  /** Collection window after the first batch of a group, ms. */
  windowMs: number;
  maxGroup: number;
  alone(ds: DataSource, req: StoreRequest, settings: StreamSettings): Promise<StoredBatch>;
  inTransaction(qr: QueryRunner, req: StoreRequest, settings: StreamSettings): Promise<StoredBatch>;
}

export class GroupCommitter {
  private queue: Pending[] = [];
  private timer: NodeJS.Timeout | undefined;
  /** Groups committed and batches in them, for the figures (bench, metrics). */
  readonly stats = { groups: 0, batches: 0, fallbacks: 0 };

  constructor(
    private readonly ds: DataSource,
    private readonly opts: GroupCommitOptions,
  ) {}

  store(req: StoreRequest, settings: StreamSettings): Promise<StoredBatch> {
    return new Promise<StoredBatch>((resolve, reject) => {
      this.queue.push({ req, settings, resolve, reject });
      if (this.queue.length >= this.opts.maxGroup) this.flush();
      else this.timer ??= setTimeout(() => this.flush(), this.opts.windowMs);
    });
  }

  private flush(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = undefined;
    const group = this.queue;
    this.queue = [];
    if (group.length) void this.run(group);
  }

  private alone(p: Pending): void {
    this.opts.alone(this.ds, p.req, p.settings).then(p.resolve, p.reject);
  }

  private async run(group: Pending[]): Promise<void> {
    if (group.length === 1) return this.alone(group[0]!);
    group.sort((a, b) => (a.req.monitor.id < b.req.monitor.id ? -1 : a.req.monitor.id > b.req.monitor.id ? 1 : 0));
    const done: { p: Pending; out: StoredBatch }[] = [];
    const solo: Pending[] = [];
    let qr: QueryRunner | undefined;
    try {
      qr = this.ds.createQueryRunner();
      await qr.connect();
      await qr.startTransaction();
      for (const [i, p] of group.entries()) {
        await qr.query(`SAVEPOINT b${i}`);
        try {
          done.push({ p, out: await this.opts.inTransaction(qr, p.req, p.settings) });
        } catch (err) {
          const errno = (err as { errno?: number; driverError?: { errno?: number } }).driverError?.errno ?? (err as { errno?: number }).errno;
          // A deadlock or lock wait ends the whole transaction in InnoDB: the group falls back below.
          if (errno === 1213 || errno === 1205) throw err;
          await qr.query(`ROLLBACK TO SAVEPOINT b${i}`);
          solo.push(p);
        }
      }
      await qr.commitTransaction();
      this.stats.groups++;
      this.stats.batches += done.length;
    } catch {
      if (qr?.isTransactionActive) await qr.rollbackTransaction().catch(() => undefined);
      this.stats.fallbacks++;
      solo.push(...done.map((d) => d.p));
      done.length = 0;
    } finally {
      await qr?.release().catch(() => undefined);
    }
    for (const d of done) d.p.resolve(d.out);
    for (const p of solo) this.alone(p);
  }
}
