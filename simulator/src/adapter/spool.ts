import { randomBytes } from 'node:crypto';
import { mkdir, open, readdir, readFile, rename, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import type { IngestBatch } from '@ebbgate/shared';

/**
 * The adapter's disk spool: one file per unsent batch, under one folder per monitor, named by a
 * zero-padded sequence number so a directory listing is the send order. A file is written to a
 * temporary name, flushed and renamed (rename is atomic on one file system), so a crash leaves
 * either the whole batch or nothing. Batches the gateway refused for good move to `rejected/`
 * with the answer beside them. A batch waiting to be sent is never deleted unless it was accepted;
 * refused ones (kept for inspection only) are capped per monitor and aged out, so a gateway that
 * refuses everything cannot fill the adapter's disk.
 */
export interface RejectedLimits {
  /** Refused batches kept per monitor (oldest go first). */
  maxPerMonitor: number;
  /** Refused batches older than this are removed, ms. */
  maxAgeMs: number;
}

export const DEFAULT_REJECTED_LIMITS: RejectedLimits = { maxPerMonitor: 1000, maxAgeMs: 30 * 86_400_000 };

export interface SpooledBatch {
  monitorId: string;
  seq: number;
  file: string;
  batch: IngestBatch;
}

const SEQ_DIGITS = 12;
const REJECTED = 'rejected';

export class BatchSpool {
  private readonly nextSeq = new Map<string, number>();

  /** Refused batches removed by the cap or the age limit since this spool was opened. */
  rejectedDropped = 0;

  constructor(
    readonly dir: string,
    private readonly durable = true,
    private readonly rejectedLimits: RejectedLimits = DEFAULT_REJECTED_LIMITS,
  ) {}

  monitorDir(monitorId: string): string {
    return path.join(this.dir, encodeURIComponent(monitorId));
  }

  /** Reads every spooled batch, per monitor in sequence order; drops half-written temporaries. */
  async load(): Promise<{ batches: SpooledBatch[]; unreadable: { file: string; error: string }[] }> {
    await mkdir(this.dir, { recursive: true });
    const batches: SpooledBatch[] = [];
    const unreadable: { file: string; error: string }[] = [];
    for (const entry of await readdir(this.dir, { withFileTypes: true })) {
      if (!entry.isDirectory()) continue;
      const monitorId = decodeURIComponent(entry.name);
      const dir = path.join(this.dir, entry.name);
      const names = (await readdir(dir)).sort();
      let max = -1;
      for (const name of names) {
        const file = path.join(dir, name);
        if (name.includes('.tmp-')) {
          await rm(file, { force: true });
          continue;
        }
        const m = /^(\d+)\.json$/.exec(name);
        if (!m) continue;
        const seq = Number(m[1]);
        max = Math.max(max, seq);
        try {
          const batch = JSON.parse(await readFile(file, 'utf8')) as IngestBatch;
          batches.push({ monitorId, seq, file, batch });
        } catch (err) {
          unreadable.push({ file, error: String(err) });
          await this.reject({ monitorId, seq, file, batch: null as unknown as IngestBatch }, { reason: 'unreadable spool file', error: String(err) });
        }
      }
      this.nextSeq.set(monitorId, Math.max(this.nextSeq.get(monitorId) ?? 0, max + 1));
      await this.pruneRejected(monitorId);
    }
    batches.sort((a, b) => (a.monitorId === b.monitorId ? a.seq - b.seq : a.monitorId < b.monitorId ? -1 : 1));
    return { batches, unreadable };
  }

  /** Writes one batch atomically under the monitor's next sequence number; resolves once on disk. */
  async put(batch: IngestBatch): Promise<SpooledBatch> {
    return this.putAt(batch, this.reserveSeq(batch.monitorId));
  }

  /** Forgets a batch the gateway has accepted. */
  async remove(item: Pick<SpooledBatch, 'file'>): Promise<void> {
    await rm(item.file, { force: true });
  }

  /** Moves a batch the gateway refused for good to `rejected/`, with the answer in a sidecar file. */
  async reject(item: SpooledBatch, answer: unknown): Promise<string> {
    const dir = path.join(this.monitorDir(item.monitorId), REJECTED);
    await mkdir(dir, { recursive: true });
    const base = path.basename(item.file, '.json');
    const target = path.join(dir, `${base}.json`);
    await rename(item.file, target).catch(async (err: NodeJS.ErrnoException) => {
      // Never spooled (memory-first mode): write it out so the refusal can still be inspected.
      if (err.code !== 'ENOENT' || !item.batch) throw err;
      await writeAtomic(target, JSON.stringify(item.batch), this.durable);
    });
    await writeAtomic(path.join(dir, `${base}.answer.json`), JSON.stringify(answer, null, 2), this.durable);
    await this.pruneRejected(item.monitorId);
    return target;
  }

  /** Applies the cap and the age limit to one monitor's `rejected/`; returns how many batches went. */
  async pruneRejected(monitorId: string, now = Date.now()): Promise<number> {
    const dir = path.join(this.monitorDir(monitorId), REJECTED);
    const names = (await readdir(dir).catch(() => [] as string[])).filter((n) => /^\d+\.json$/.test(n)).sort();
    const drop = new Set(names.slice(0, Math.max(0, names.length - this.rejectedLimits.maxPerMonitor)));
    for (const n of names) {
      if (drop.has(n)) continue;
      const st = await stat(path.join(dir, n)).catch(() => null);
      if (st && now - st.mtimeMs > this.rejectedLimits.maxAgeMs) drop.add(n);
      else break; // sequence order is age order: the rest are newer
    }
    for (const n of drop) {
      await rm(path.join(dir, n), { force: true });
      await rm(path.join(dir, n.replace(/\.json$/, '.answer.json')), { force: true });
    }
    this.rejectedDropped += drop.size;
    return drop.size;
  }

  /** Refused batches kept now, over all monitors. */
  async rejectedCount(): Promise<number> {
    let n = 0;
    for (const entry of await readdir(this.dir, { withFileTypes: true }).catch(() => [])) {
      if (!entry.isDirectory()) continue;
      const names = await readdir(path.join(this.dir, entry.name, REJECTED)).catch(() => [] as string[]);
      n += names.filter((x) => /^\d+\.json$/.test(x)).length;
    }
    return n;
  }

  /** Sequence number the next batch of this monitor will get (for memory-first queues). */
  reserveSeq(monitorId: string): number {
    const seq = this.nextSeq.get(monitorId) ?? 0;
    this.nextSeq.set(monitorId, seq + 1);
    return seq;
  }

  /** Writes a batch under an already reserved sequence number. */
  async putAt(batch: IngestBatch, seq: number): Promise<SpooledBatch> {
    const dir = this.monitorDir(batch.monitorId);
    await mkdir(dir, { recursive: true });
    const file = path.join(dir, `${String(seq).padStart(SEQ_DIGITS, '0')}.json`);
    await writeAtomic(file, JSON.stringify(batch), this.durable);
    return { monitorId: batch.monitorId, seq, file, batch };
  }

  fileFor(monitorId: string, seq: number): string {
    return path.join(this.monitorDir(monitorId), `${String(seq).padStart(SEQ_DIGITS, '0')}.json`);
  }
}

async function writeAtomic(file: string, text: string, durable: boolean): Promise<void> {
  const tmp = `${file}.tmp-${process.pid}-${randomBytes(4).toString('hex')}`;
  const fh = await open(tmp, 'w');
  try {
    await fh.writeFile(text, 'utf8');
    if (durable) await fh.sync();
  } finally {
    await fh.close();
  }
  await rename(tmp, file);
}
