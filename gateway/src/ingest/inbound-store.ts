import { createHash } from 'node:crypto';
import type { DataSource, QueryRunner } from 'typeorm';
import type { Continuity, InboundOutcome, Transport } from '@ebbgate/shared';
import { ENGINE_VERSION } from '@ebbgate/shared/analysis';
import { encodeSegment } from '@ebbgate/shared/codec';
import { isDuplicateKey } from '../db/errors';
import type { MappedChannel } from './channel-mapping';
import type { ReceivedBatch } from './decoded-batch';
import { IngestRefusal } from './refusal';
import { compressRawBody } from './raw-body';
import { GroupCommitter } from './group-commit';
import { continuityOf, plannedWindowStarts } from './window-plan';
import type { StoreRequest, StoredBatch, StreamSettings } from './store-types';

export type { StoreRequest, StoredBatch, StreamSettings } from './store-types';

export interface InboundRecord {
  transport: Transport;
  receivedAt: Date;
  outcome: InboundOutcome;
  reason: string | null;
  raw: Buffer;
  sizeBytes?: number;
  monitorId?: string | null;
  monitorIdentifier?: string | null;
  batchId?: string | null;
  /** The authenticated sender (senderLabel), the peer address, and whether it was a stranger. */
  sender?: string | null;
  sourceAddress?: string | null;
  stranger?: boolean;
}

/**
 * Keeps a message that was not stored as data (quarantined, rejected, duplicate), raw, with its
 * reason. A large body goes as a prepared statement (binary protocol): through the text protocol
 * an 8 MB BLOB is hex-escaped in JavaScript, which held the event loop for hundreds of ms.
 */
export async function recordInbound(ds: DataSource | QueryRunner, r: InboundRecord): Promise<string> {
  const sql = `INSERT INTO inbound_message (received_at, transport, outcome, reason, monitor_id, monitor_identifier, batch_id, size_bytes, raw, sender, source_address, stranger)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`;
  const params = [
    r.receivedAt,
    r.transport,
    r.outcome,
    r.reason?.slice(0, 60_000) ?? null,
    r.monitorId ?? null,
    r.monitorIdentifier?.slice(0, 64) ?? null,
    r.batchId?.slice(0, 128) ?? null,
    r.sizeBytes ?? r.raw.length,
    r.raw,
    r.sender?.slice(0, 255) ?? null,
    r.sourceAddress?.slice(0, 64) ?? null,
    r.stranger ? 1 : 0,
  ];
  let res: { insertId: number | string };
  if (r.raw.length > 65_536 && 'createQueryRunner' in ds) {
    const qr = ds.createQueryRunner();
    await qr.connect();
    try {
      res = await exec(qr, sql, params);
    } finally {
      await qr.release();
    }
  } else if (r.raw.length > 65_536) res = await exec(ds as QueryRunner, sql, params);
  else res = (await ds.query(sql, params)) as { insertId: number | string };
  return String(res.insertId);
}

/** Content identity of a batch, independent of JSON formatting: times, codes, samples, context. */
function contentHash(batch: ReceivedBatch, channels: MappedChannel[]): string {
  const h = createHash('sha256');
  h.update(`${batch.startTime.getTime()}|${JSON.stringify(batch.context ?? null)}`);
  for (const c of channels) {
    h.update(`|${c.code}|${c.sampleRate}|${c.sampleCount}|`);
    h.update(c.samples);
  }
  return h.digest('hex');
}

/**
 * Runs a statement as a server-side prepared statement (mysql2 `execute`, binary protocol) on the
 * query runner's connection: BLOB parameters travel as bytes instead of hex-escaped text, which
 * halves what ingest sends to MariaDB and skips the string escaping (profiled hot spot).
 */
function exec<T = unknown>(qr: QueryRunner, sql: string, params: unknown[]): Promise<T> {
  const conn = (qr as unknown as { databaseConnection?: { execute?: (sql: string, params: unknown[], cb: (err: Error | null, result: T) => void) => void } })
    .databaseConnection;
  if (!conn?.execute) return qr.query(sql, params) as Promise<T>;
  return new Promise<T>((resolve, reject) => conn.execute!(sql, params, (err, result) => (err ? reject(err) : resolve(result))));
}

const ms = (d: Date | string | null): number | null => (d === null ? null : new Date(d).getTime());

/**
 * Stores one batch in one transaction: the inbound message row, one segment row per channel,
 * the monitor's stream position and any analysis windows the new data completes. Answers
 * `duplicate` for a repeat of the same batch id and content; refuses (409) other content.
 * With `settings.groupCommit` (config ingest.groupCommit, opt-in), new batches share their
 * transaction and commit with those arriving within 2 ms.
 */
export function storeBatch(ds: DataSource, req: StoreRequest, settings: StreamSettings): Promise<StoredBatch> {
  if (req.reprocessOf || !settings.groupCommit) return storeBatchAlone(ds, req, settings);
  return groupCommitterFor(ds).store(req, settings);
}

const committers = new WeakMap<DataSource, GroupCommitter>();

/** The ingest group committer of a data source (ingest/group-commit.ts): 2-ms window, up to 32 batches. */
export function groupCommitterFor(ds: DataSource): GroupCommitter {
  let g = committers.get(ds);
  if (!g) {
    g = new GroupCommitter(ds, {
      windowMs: 2,
      maxGroup: 32,
      alone: storeBatchAlone,
      inTransaction: (qr, req, settings) =>
        storeInTransaction(qr, req, contentHash(req.batch, req.channels), `${req.monitor.id}|${req.batch.batchId}`, settings),
    });
    committers.set(ds, g);
  }
  return g;
}

/** One batch in a transaction of its own (reprocessing, and a batch that failed inside a group). */
export async function storeBatchAlone(ds: DataSource, req: StoreRequest, settings: StreamSettings): Promise<StoredBatch> {
  const { batch, channels, monitor } = req;
  const hash = contentHash(batch, channels);
  const batchKey = `${monitor.id}|${batch.batchId}`;
  const qr = ds.createQueryRunner();
  await qr.connect();
  try {
    await qr.startTransaction();
    try {
      const out = await storeInTransaction(qr, req, hash, batchKey, settings);
      await qr.commitTransaction();
      return out;
    } catch (err) {
      await qr.rollbackTransaction();
      if (err instanceof ConflictingStream) return await keepConflicting(qr, req, err);
      if (!isDuplicateKey(err)) throw err;
    }
    return await settleRepeat(qr, req, hash, batchKey);
  } finally {
    await qr.release();
  }
}

async function storeInTransaction(qr: QueryRunner, req: StoreRequest, hash: string, batchKey: string, settings: StreamSettings): Promise<StoredBatch> {
  const { batch, channels, monitor } = req;
  if (!channels.length) return storeWithoutWaveforms(qr, req, hash, batchKey);
  const rows = (await exec(qr, 'SELECT received_until, next_window_start FROM monitor WHERE id = ? FOR UPDATE', [monitor.id])) as {
    received_until: Date | null;
    next_window_start: Date | null;
  }[];
  const prevEnd = ms(rows[0]?.received_until ?? null);
  let next = ms(rows[0]?.next_window_start ?? null);
  const startMs = batch.startTime.getTime();
  const durationMs = Math.max(...channels.map((c) => (c.sampleCount / c.sampleRate) * 1000));
  const endMs = startMs + durationMs;
  // Within one and a half sample periods of the slowest channel counts as contiguous.
  const toleranceMs = Math.max(...channels.map((c) => 1500 / c.sampleRate));
  const { continuity, continuityMs } = continuityOf(prevEnd, startMs, toleranceMs);
  if (continuity === 'overlap') await refuseSecondStream(qr, req, continuityMs ?? 0);

  const windowMs = settings.windowSeconds * 1000;
  const stepMs = settings.stepSeconds * 1000;
  const starts: number[] = [];
  if (next === null) next = startMs;
  else if (continuity === 'gap' && prevEnd !== null && (continuityMs ?? 0) > settings.gapResetSeconds * 1000) {
    // Plan what the data before the gap completes, then restart the windows at the new data.
    const before = plannedWindowStarts(next, prevEnd, windowMs, stepMs);
    starts.push(...before);
    next = startMs;
  }
  const coveredUntil = Math.max(prevEnd ?? endMs, endMs);
  const after = plannedWindowStarts(next, coveredUntil, windowMs, stepMs);
  starts.push(...after);
  if (after.length) next = (after[after.length - 1] as number) + stepMs;

  const contextJson = batch.context ? JSON.stringify(batch.context) : null;
  let messageId: string;
  if (req.reprocessOf) {
    await exec(
      qr,
      `UPDATE inbound_message SET outcome = 'reprocessed', reason = NULL, monitor_id = ?, batch_id = ?, batch_key = ?, content_hash = ?, batch_start = ?, context = ?,
       continuity = ?, continuity_ms = ?, handled_at = ?, handled_by = ? WHERE id = ?`,
      [monitor.id, batch.batchId, batchKey, hash, batch.startTime, contextJson, continuity, continuityMs, new Date(), req.handledBy ?? null, req.reprocessOf],
    );
    messageId = req.reprocessOf;
  } else {
    const rawKept = compressRawBody(req.raw);
    const res = (await exec(
      qr,
      `INSERT INTO inbound_message (received_at, transport, outcome, monitor_id, monitor_identifier, batch_id, batch_key, content_hash, size_bytes, raw, raw_encoding, batch_start, context, continuity, continuity_ms, sender, source_address)
       VALUES (?, ?, 'accepted', ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      // The samples are stored decoded below, so the raw body is kept compressed (ingest/raw-body.ts).
      [
        req.receivedAt,
        req.transport,
        monitor.id,
        monitor.identifier,
        batch.batchId,
        batchKey,
        hash,
        req.raw.length,
        rawKept.bytes,
        rawKept.encoding,
        batch.startTime,
        contextJson,
        continuity,
        continuityMs,
        req.sender ?? null,
        req.sourceAddress ?? null,
      ],
    )) as { insertId: number | string };
    messageId = String(res.insertId);
  }

  const values: unknown[] = [];
  for (const c of channels) {
    // Stored compacted (delta coding + DEFLATE, bit-exact; shared/codec); readers decode through storedSamplesToFloat32.
    values.push(
      monitor.id,
      messageId,
      c.code,
      c.role,
      c.unit,
      c.sampleRate,
      batch.startTime,
      new Date(startMs + (c.sampleCount / c.sampleRate) * 1000),
      c.sampleCount,
      c.gain,
      c.offset,
      encodeSegment(c.samples),
    );
  }
  await exec(
    qr,
    `INSERT INTO waveform_segment (monitor_id, inbound_message_id, channel_code, role, unit, sample_rate, start_time, end_time, sample_count, gain, value_offset, samples)
     VALUES ${channels.map(() => '(?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)').join(', ')}`,
    values,
  );
  if (starts.length) {
    const now = new Date();
    const w: unknown[] = [];
    for (const s of starts) w.push(monitor.id, new Date(s), new Date(s + windowMs), ENGINE_VERSION, now);
    await exec(
      qr,
      `INSERT IGNORE INTO analysis_window (monitor_id, window_start, window_end, engine_version, status, attempts, created_at)
       VALUES ${starts.map(() => "(?, ?, ?, ?, 'due', 0, ?)").join(', ')}`,
      w,
    );
  }
  const totalSamples = channels.reduce((a, c) => a + c.sampleCount, 0);
  await exec(qr, 'UPDATE monitor SET last_seen_at = ?, data_rate = ?, received_until = ?, next_window_start = ? WHERE id = ?', [
    req.receivedAt,
    durationMs > 0 ? totalSamples / (durationMs / 1000) : null,
    new Date(coveredUntil),
    new Date(next),
    monitor.id,
  ]);
  return { outcome: 'accepted', inboundMessageId: messageId, continuity, continuityMs, windowsPlanned: starts.length };
}

/** Data overlapping what another sender already stored for this monitor (see refuseSecondStream). */
class ConflictingStream extends Error {
  constructor(
    readonly reason: string,
    readonly otherMessageId: string,
  ) {
    super(reason);
  }
}

/**
 * An overlap from the sender that sent the data before it is the same stream (a resend with a
 * new id, clock jitter) and is stored as an overlap. An overlap from a different sender is a
 * second stream claiming the same monitor: it is refused and kept as `conflicting`, never merged.
 */
async function refuseSecondStream(qr: QueryRunner, req: StoreRequest, overlapMs: number): Promise<void> {
  const [last] = (await exec(
    qr,
    "SELECT id, sender FROM inbound_message WHERE monitor_identifier = ? AND outcome IN ('accepted', 'reprocessed') AND batch_start IS NOT NULL ORDER BY received_at DESC, id DESC LIMIT 1",
    [req.monitor.identifier],
  )) as { id: string; sender: string | null }[];
  // Data stored before senders were recorded (null) cannot be told apart: treated as the same stream.
  if (!last || last.sender === null || last.sender === (req.sender ?? null)) return;
  throw new ConflictingStream(
    `A second stream for monitor ${req.monitor.identifier}: this batch starts ${Math.round(-overlapMs)} ms before the end of the data already stored from another sender (inbound message ${last.id}, ${last.sender ?? 'unknown sender'}); not merged.`,
    String(last.id),
  );
}

async function keepConflicting(qr: QueryRunner, req: StoreRequest, err: ConflictingStream): Promise<never> {
  if (req.reprocessOf) {
    await qr.query("UPDATE inbound_message SET outcome = 'conflicting', reason = ?, handled_at = ?, handled_by = ? WHERE id = ?", [
      err.reason,
      new Date(),
      req.handledBy ?? null,
      req.reprocessOf,
    ]);
  } else {
    await recordInbound(qr, {
      transport: req.transport,
      receivedAt: req.receivedAt,
      outcome: 'conflicting',
      reason: err.reason,
      raw: req.raw,
      monitorId: req.monitor.id,
      monitorIdentifier: req.monitor.identifier,
      batchId: req.batch.batchId,
      sender: req.sender,
      sourceAddress: req.sourceAddress,
    });
  }
  throw new IngestRefusal('conflicting', err.reason, [
    { path: 'startTime', message: `overlaps data from another sender (inbound message ${err.otherMessageId})` },
  ]);
}

/** A message with numerics only (no waveform rows): kept and made idempotent, nothing to analyse. */
async function storeWithoutWaveforms(qr: QueryRunner, req: StoreRequest, hash: string, batchKey: string): Promise<StoredBatch> {
  const reason = 'No waveform rows; the numerics are kept in the raw message.';
  if (req.reprocessOf) {
    await qr.query(
      "UPDATE inbound_message SET outcome = 'reprocessed', reason = ?, monitor_id = ?, batch_id = ?, batch_key = ?, content_hash = ?, handled_at = ?, handled_by = ? WHERE id = ?",
      [reason, req.monitor.id, req.batch.batchId, batchKey, hash, new Date(), req.handledBy ?? null, req.reprocessOf],
    );
    return { outcome: 'accepted', inboundMessageId: req.reprocessOf, continuity: null, continuityMs: null, windowsPlanned: 0 };
  }
  const res = (await qr.query(
    `INSERT INTO inbound_message (received_at, transport, outcome, reason, monitor_id, monitor_identifier, batch_id, batch_key, content_hash, size_bytes, raw, sender, source_address)
     VALUES (?, ?, 'accepted', ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    [
      req.receivedAt,
      req.transport,
      reason,
      req.monitor.id,
      req.monitor.identifier,
      req.batch.batchId,
      batchKey,
      hash,
      req.raw.length,
      req.raw,
      req.sender ?? null,
      req.sourceAddress ?? null,
    ],
  )) as { insertId: number | string };
  await qr.query('UPDATE monitor SET last_seen_at = ? WHERE id = ?', [req.receivedAt, req.monitor.id]);
  return { outcome: 'accepted', inboundMessageId: String(res.insertId), continuity: null, continuityMs: null, windowsPlanned: 0 };
}

/** The batch id was stored before: the same content is a harmless repeat, other content a conflict. */
async function settleRepeat(qr: QueryRunner, req: StoreRequest, hash: string, batchKey: string): Promise<StoredBatch> {
  const [orig] = (await qr.query('SELECT id, content_hash, continuity, continuity_ms FROM inbound_message WHERE batch_key = ?', [batchKey])) as {
    id: string;
    content_hash: string;
    continuity: Continuity | null;
    continuity_ms: number | null;
  }[];
  if (!orig) throw new Error(`duplicate batch key ${batchKey} but no stored message`);
  const same = orig.content_hash === hash;
  const outcome: InboundOutcome = same ? 'duplicate' : 'rejected';
  const reason = same
    ? `Repeat of inbound message ${orig.id} (same batch id and content); nothing stored again.`
    : `Batch id ${req.batch.batchId} was stored before (inbound message ${orig.id}) with other content.`;
  if (req.reprocessOf) {
    await qr.query('UPDATE inbound_message SET outcome = ?, reason = ?, handled_at = ?, handled_by = ? WHERE id = ?', [
      outcome,
      reason,
      new Date(),
      req.handledBy ?? null,
      req.reprocessOf,
    ]);
  } else {
    await recordInbound(qr, {
      transport: req.transport,
      receivedAt: req.receivedAt,
      outcome,
      reason,
      raw: req.raw,
      monitorId: req.monitor.id,
      monitorIdentifier: req.monitor.identifier,
      batchId: req.batch.batchId,
      sender: req.sender,
      sourceAddress: req.sourceAddress,
    });
  }
  if (!same) throw new IngestRefusal('conflict', reason, [{ path: 'batchId', message: 'already used for other content' }]);
  return { outcome: 'duplicate', inboundMessageId: String(orig.id), continuity: orig.continuity, continuityMs: orig.continuity_ms, windowsPlanned: 0 };
}
