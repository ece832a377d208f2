import type { DataSource } from 'typeorm';
import type { InboundMessage, InboundMessageDetail, InboundQuery, Page, Transport } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import type { ChangeBy } from '../app-context';
import type { Principal } from '../auth/principal';
import { conflict, notFound } from '../http/problem';
import type { ReceivedBatch } from './decoded-batch';
import { InboundMessageRow } from './ingest.entities';
import type { IngestService } from './ingest.service';
import { IngestRefusal } from './refusal';
import { sortColumn } from '../http/sort';
import { rawBodyOf } from './raw-body';

export function toInboundMessage(r: InboundMessageRow): InboundMessage {
  return {
    id: String(r.id),
    receivedAt: r.receivedAt.toISOString(),
    transport: r.transport,
    outcome: r.outcome,
    reason: r.reason,
    monitorIdentifier: r.monitorIdentifier,
    batchId: r.batchId,
    sizeBytes: r.sizeBytes,
    continuity: r.continuity,
    continuityMs: r.continuityMs,
    sender: r.sender ?? null,
    sourceAddress: r.sourceAddress ?? null,
    stranger: Boolean(r.stranger),
  };
}

const RAW_SHOWN = 1_000_000;

const SORTABLE: Record<string, string> = { receivedAt: 'received_at', outcome: 'outcome', sizeBytes: 'size_bytes', id: 'id' };

export async function listInbound(ds: DataSource, q: InboundQuery): Promise<Page<InboundMessage>> {
  const qb = ds
    .getRepository(InboundMessageRow)
    .createQueryBuilder('m')
    .select([
      'm.id',
      'm.receivedAt',
      'm.transport',
      'm.outcome',
      'm.reason',
      'm.monitorIdentifier',
      'm.batchId',
      'm.sizeBytes',
      'm.continuity',
      'm.continuityMs',
      'm.sender',
      'm.sourceAddress',
      'm.stranger',
    ]);
  if (q.transport) qb.andWhere('m.transport = :transport', { transport: q.transport });
  if (q.outcome) qb.andWhere('m.outcome = :outcome', { outcome: q.outcome });
  if (q.monitor) qb.andWhere('(m.monitor_identifier = :monitor OR m.monitor_id = :monitor)', { monitor: q.monitor });
  if (q.from) qb.andWhere('m.received_at >= :from', { from: new Date(q.from) });
  if (q.to) qb.andWhere('m.received_at <= :to', { to: new Date(q.to) });
  const col = sortColumn(SORTABLE, q.sort, 'received_at');
  const dir = q.order === 'asc' ? 'ASC' : 'DESC';
  qb.orderBy(`m.${col}`, dir).addOrderBy('m.id', dir);
  const [rows, total] = await qb
    .skip((q.page - 1) * q.pageSize)
    .take(q.pageSize)
    .getManyAndCount();
  return { items: rows.map(toInboundMessage), page: q.page, pageSize: q.pageSize, total };
}

export async function getInbound(ds: DataSource, id: string, readBy: ChangeBy): Promise<InboundMessageDetail> {
  const r = await ds.getRepository(InboundMessageRow).findOneBy({ id });
  if (!r) throw notFound(`Inbound message ${id}`);
  // Patient data: every read of a raw inbound message is audited.
  await recordAudit(ds.manager, {
    principal: readBy.principal,
    action: 'inbound.read-raw',
    entityType: 'inbound-message',
    entityId: id,
    requestId: readBy.requestId,
  });
  return {
    ...toInboundMessage(r),
    raw: rawBodyOf(r).subarray(0, RAW_SHOWN).toString('utf8'),
    rawTruncated: rawBodyOf(r).length > RAW_SHOWN,
    handledAt: r.handledAt?.toISOString() ?? null,
    handledBy: r.handledBy,
  };
}

const who = (p: Principal | undefined) => (p?.kind === 'user' ? p.username : (p?.kind ?? 'system'));

/**
 * Runs a quarantined message through the pipeline again (after its profile or monitor was
 * fixed). On success the row becomes `reprocessed` and its data is stored under it; if it still
 * fails it stays quarantined with the new reason. Audited either way.
 */
export async function reprocessInbound(
  ds: DataSource,
  service: IngestService,
  decoders: Record<Transport, (raw: Buffer) => ReceivedBatch | Promise<ReceivedBatch>>,
  id: string,
  by: ChangeBy,
) {
  const row = await ds.getRepository(InboundMessageRow).findOneBy({ id });
  if (!row) throw notFound(`Inbound message ${id}`);
  if (row.outcome !== 'quarantined') throw conflict(`Inbound message ${id} is ${row.outcome}; only quarantined messages can be reprocessed.`);
  let result: 'reprocessed' | 'duplicate' | 'quarantined' | 'conflicting';
  let reason: string | null = null;
  try {
    const out = await service.reprocess(id, row.transport, rawBodyOf(row), decoders[row.transport], who(by.principal), {
      sender: row.sender,
      sourceAddress: row.sourceAddress,
      monitorId: row.monitorId,
    });
    result = out.stored!.outcome === 'accepted' ? 'reprocessed' : 'duplicate';
  } catch (err) {
    if (!(err instanceof IngestRefusal)) throw err;
    result = err.kind === 'conflict' ? 'duplicate' : err.kind === 'conflicting' ? 'conflicting' : 'quarantined';
    reason = err.describe();
    if (err.kind !== 'conflict' && err.kind !== 'conflicting')
      await ds.query('UPDATE inbound_message SET reason = ? WHERE id = ?', [reason.slice(0, 60_000), id]);
  }
  const after = (await ds.getRepository(InboundMessageRow).findOneByOrFail({ id })) as InboundMessageRow;
  await ds.transaction((m) =>
    recordAudit(m, {
      principal: by.principal,
      action: 'inbound.reprocess',
      entityType: 'inbound-message',
      entityId: id,
      before: { outcome: row.outcome, reason: row.reason },
      after: { outcome: after.outcome, reason: after.reason },
      requestId: by.requestId,
    }),
  );
  return { message: toInboundMessage(after), result: after.outcome === 'rejected' ? ('rejected' as const) : result, reason: reason ?? after.reason };
}

export async function discardInbound(ds: DataSource, id: string, reason: string, by: ChangeBy) {
  return ds.transaction(async (m) => {
    const row = await m.findOne(InboundMessageRow, { where: { id }, lock: { mode: 'pessimistic_write' } });
    if (!row) throw notFound(`Inbound message ${id}`);
    if (row.outcome !== 'quarantined') throw conflict(`Inbound message ${id} is ${row.outcome}; only quarantined messages can be discarded.`);
    const before = { outcome: row.outcome, reason: row.reason };
    await m.update(
      InboundMessageRow,
      { id },
      { outcome: 'discarded', reason: `Discarded: ${reason} (was: ${row.reason ?? ''})`.slice(0, 60_000), handledAt: new Date(), handledBy: who(by.principal) },
    );
    const after = (await m.findOneByOrFail(InboundMessageRow, { id })) as InboundMessageRow;
    await recordAudit(m, {
      principal: by.principal,
      action: 'inbound.discard',
      entityType: 'inbound-message',
      entityId: id,
      before,
      after: { outcome: after.outcome, reason },
      requestId: by.requestId,
    });
    return toInboundMessage(after);
  });
}
