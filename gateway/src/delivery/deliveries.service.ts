/**
 * Failed-messages work for operators: list and inspect outbox rows, retry, replay, discard,
 * pause and resume destinations. Every change by a person is audited in the same transaction.
 */
import type { Delivery, DeliveryActionResult, DeliveryDetail, DeliveryQuery, Destination, Page } from '@ebbgate/shared';
import type { DataSource } from 'typeorm';
import { In } from 'typeorm';
import { recordAudit } from '../audit/audit.service';
import type { ChangeBy } from '../app-context';
import { actorOf } from '../auth/principal';
import { notFound, conflict } from '../http/problem';
import { DeliveryAttemptRow, DeliveryRow, DestinationRow } from './delivery.entities';
import { sortColumn } from '../http/sort';

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export function toDelivery(r: DeliveryRow): Delivery {
  return {
    id: String(r.id),
    assessmentId: r.assessmentId,
    destinationId: r.destinationId,
    index: r.indexName as Delivery['index'],
    kind: r.kind,
    status: r.status,
    identifier: r.identifier,
    serverId: r.serverId,
    patientRef: r.patientRef,
    patientName: r.patientName,
    patientMrn: r.patientMrn,
    tries: r.tries,
    attemptCount: r.attemptCount,
    nextAttemptAt: r.nextAttemptAt.toISOString(),
    lastHttpStatus: r.lastHttpStatus,
    lastError: r.lastError,
    discardReason: r.discardReason,
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
    deliveredAt: iso(r.deliveredAt),
  };
}

const SORTABLE: Record<string, string> = {
  updatedAt: 'd.updated_at',
  createdAt: 'd.created_at',
  status: 'd.status',
  nextAttemptAt: 'd.next_attempt_at',
  id: 'd.id',
};

export async function listDeliveries(ds: DataSource, q: DeliveryQuery): Promise<Page<Delivery>> {
  const qb = ds.getRepository(DeliveryRow).createQueryBuilder('d');
  if (q.status) qb.andWhere('d.status = :status', { status: q.status });
  if (q.destination) qb.andWhere('d.destination_id = :destination', { destination: q.destination });
  if (q.assessment) qb.andWhere('d.assessment_id = :assessment', { assessment: q.assessment });
  if (q.index) qb.andWhere('d.index_name = :index', { index: q.index });
  if (q.kind) qb.andWhere('d.kind = :kind', { kind: q.kind });
  if (q.from) qb.andWhere('d.updated_at >= :from', { from: new Date(q.from) });
  if (q.to) qb.andWhere('d.updated_at <= :to', { to: new Date(q.to) });
  const order = q.order === 'asc' ? 'ASC' : 'DESC';
  qb.orderBy(sortColumn(SORTABLE, q.sort, 'd.updated_at'), order).addOrderBy('d.id', order);
  const [rows, total] = await qb
    .skip((q.page - 1) * q.pageSize)
    .take(q.pageSize)
    .getManyAndCount();
  return { items: rows.map(toDelivery), page: q.page, pageSize: q.pageSize, total };
}

export async function getDelivery(ds: DataSource, id: string): Promise<DeliveryDetail> {
  const row = await ds.getRepository(DeliveryRow).findOneBy({ id });
  if (!row) throw notFound(`Delivery ${id}`);
  const attempts = await ds.getRepository(DeliveryAttemptRow).find({ where: { deliveryId: id }, order: { at: 'ASC', id: 'ASC' } });
  return {
    ...toDelivery(row),
    payload: row.payload ?? null,
    attempts: attempts.map((a) => ({
      at: a.at.toISOString(),
      durationMs: a.durationMs,
      httpStatus: a.httpStatus,
      outcome: a.outcome,
      detail: a.detail,
      response: a.response ?? null,
      mode: a.mode as 'single',
    })),
  };
}

/**
 * retry: send the kept payload again, with a fresh retry budget.
 * replay: rebuild the payload (patient context, code map and settings as they are now) and send;
 * also allowed on delivered rows: conditional create on the identifier makes it harmless.
 */
export async function requeue(ds: DataSource, ids: string[], mode: 'retry' | 'replay', act: ChangeBy): Promise<DeliveryActionResult> {
  await refuseEnteredInError(ds, ids, mode, act);
  const allowed = mode === 'retry' ? ['failed', 'waiting-context', 'pending'] : ['failed', 'waiting-context', 'pending', 'delivered', 'discarded', 'withheld'];
  const result: DeliveryActionResult = { updated: [], skipped: [] };
  await ds.transaction(async (m) => {
    const rows = await m
      .getRepository(DeliveryRow)
      .createQueryBuilder('d')
      .where({ id: In(ids) })
      .setLock('pessimistic_write')
      .getMany();
    const byId = new Map(rows.map((r) => [String(r.id), r]));
    const now = new Date();
    for (const id of ids) {
      const r = byId.get(id);
      if (!r) {
        result.skipped.push({ id, reason: 'no such delivery' });
        continue;
      }
      if (!allowed.includes(r.status)) {
        result.skipped.push({ id, reason: `a ${r.status} delivery cannot be ${mode === 'retry' ? 'retried' : 'replayed'}` });
        continue;
      }
      if (mode === 'replay' && r.kind === 'amend' && r.status === 'delivered') {
        result.skipped.push({ id, reason: 'an amendment already delivered is not replayed' });
        continue;
      }
      const before = toDelivery(r);
      await m.update(
        DeliveryRow,
        { id: r.id },
        {
          // claimId null: a worker still holding the row from before is fenced out (its answer is not applied).
          status: 'pending',
          tries: 0,
          nextAttemptAt: now,
          updatedAt: now,
          discardReason: null,
          discardedBy: null,
          claimId: null,
          ...(mode === 'replay' ? { payload: null } : {}),
        },
      );
      await recordAudit(m, {
        principal: act.principal,
        action: `delivery.${mode}`,
        entityType: 'delivery',
        entityId: id,
        before,
        after: { status: 'pending', replay: mode === 'replay' },
        requestId: act.requestId,
      });
      result.updated.push(id);
    }
  });
  return result;
}

/**
 * A result whose assessment is marked entered in error is never sent again (only its amendment
 * goes out). The whole request is refused with 409 so nobody believes part of it went, and the
 * refused attempt is audited (in its own transaction: the refusal itself is the event).
 */
async function refuseEnteredInError(ds: DataSource, ids: string[], mode: 'retry' | 'replay', act: ChangeBy): Promise<void> {
  if (!ids.length) return;
  const rows = (await ds.query(
    `SELECT d.id AS id, d.assessment_id AS assessmentId, d.status AS status, a.entered_in_error_at AS markedAt, a.entered_in_error_by AS markedBy
     FROM delivery d JOIN assessment a ON a.id = d.assessment_id WHERE d.id IN (?) AND d.kind = 'create' AND a.entered_in_error_at IS NOT NULL`,
    [ids],
  )) as { id: string | number; assessmentId: string; status: string; markedAt: Date; markedBy: string | null }[];
  if (!rows.length) return;
  await ds.transaction(async (m) => {
    for (const r of rows) {
      await recordAudit(m, {
        principal: act.principal,
        action: `delivery.${mode}.refused`,
        entityType: 'delivery',
        entityId: String(r.id),
        before: { status: r.status, assessmentId: r.assessmentId },
        after: { refused: 'assessment entered in error', markedAt: new Date(r.markedAt).toISOString(), markedBy: r.markedBy },
        requestId: act.requestId,
      });
    }
  });
  const list = rows
    .map((r) => `delivery ${r.id} (assessment ${r.assessmentId}, marked ${new Date(r.markedAt).toISOString()}${r.markedBy ? ` by ${r.markedBy}` : ''})`)
    .join('; ');
  throw conflict(
    `Refused: ${rows.length === 1 ? 'this result belongs' : `${rows.length} of these results belong`} to an assessment marked entered in error, so ${mode === 'retry' ? 'retrying' : 'replaying'} it would send a value reviewers withdrew. Its entered-in-error amendment is sent instead. Nothing was requeued: ${list}.`,
  );
}

export async function discardDelivery(ds: DataSource, id: string, reason: string, act: ChangeBy): Promise<Delivery> {
  return ds.transaction(async (m) => {
    const r = await m.getRepository(DeliveryRow).createQueryBuilder('d').where({ id }).setLock('pessimistic_write').getOne();
    if (!r) throw notFound(`Delivery ${id}`);
    if (r.status === 'delivered') throw conflict('A delivered result cannot be discarded; a reviewer can mark it entered in error instead.');
    if (r.status === 'discarded') throw conflict('This delivery is already discarded.');
    const before = toDelivery(r);
    const now = new Date();
    Object.assign(r, { status: 'discarded', discardReason: reason, discardedBy: actorOf(act.principal).actorName, updatedAt: now });
    await m.save(r);
    await recordAudit(m, {
      principal: act.principal,
      action: 'delivery.discard',
      entityType: 'delivery',
      entityId: id,
      before,
      after: { status: 'discarded', reason },
      requestId: act.requestId,
    });
    return toDelivery(r);
  });
}

export function destinationState(d: DestinationRow): Destination['state'] {
  return d.configurationError ? 'misconfigured' : d.paused ? 'paused' : d.circuitState === 'open' ? 'circuit-open' : d.downSince ? 'down' : 'up';
}

export async function listDestinations(ds: DataSource): Promise<Destination[]> {
  const rows = await ds.getRepository(DestinationRow).find({ order: { name: 'ASC' } });
  const counts = (await ds.query(
    `SELECT destination_id AS d, status AS s, COUNT(*) AS c FROM delivery WHERE status IN ('pending','waiting-context','failed') GROUP BY destination_id, status`,
  )) as { d: string; s: string; c: string | number }[];
  const count = (d: string, s: string) => Number(counts.find((x) => x.d === d && x.s === s)?.c ?? 0);
  return rows.map((d) => ({
    id: d.id,
    name: d.name,
    kind: d.kind,
    state: destinationState(d),
    paused: d.paused,
    pausedBy: d.pausedBy,
    circuitState: d.circuitState,
    consecutiveFailures: d.consecutiveFailures,
    downSince: iso(d.downSince),
    lastSuccessAt: iso(d.lastSuccessAt),
    lastError: d.lastError,
    configurationError: d.configurationError,
    queueDepth: count(d.id, 'pending') + count(d.id, 'waiting-context'),
    waitingContext: count(d.id, 'waiting-context'),
    failed: count(d.id, 'failed'),
  }));
}

export async function setPaused(ds: DataSource, id: string, paused: boolean, act: ChangeBy): Promise<Destination> {
  await ds.transaction(async (m) => {
    const d = await m.getRepository(DestinationRow).createQueryBuilder('d').where({ id }).setLock('pessimistic_write').getOne();
    if (!d) throw notFound(`Destination ${id}`);
    const before = { paused: d.paused };
    Object.assign(d, { paused, pausedAt: paused ? new Date() : null, pausedBy: paused ? actorOf(act.principal).actorName : null, updatedAt: new Date() });
    await m.save(d);
    await recordAudit(m, {
      principal: act.principal,
      action: paused ? 'destination.pause' : 'destination.resume',
      entityType: 'destination',
      entityId: id,
      before,
      after: { paused },
      requestId: act.requestId,
    });
  });
  return (await listDestinations(ds)).find((d) => d.id === id)!;
}
