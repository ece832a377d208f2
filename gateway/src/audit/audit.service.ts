import type { DataSource, EntityManager } from 'typeorm';
import type { AuditEntry, AuditQuery, Page } from '@ebbgate/shared';
import type { Principal } from '../app-context';
import { actorOf } from './actor';
import { sortColumn } from '../http/sort';
import { AuditEntryRow } from './audit-entry.entity';

export interface AuditEvent {
  principal: Principal | undefined;
  action: string;
  entityType: string;
  entityId: string | null;
  before?: unknown;
  after?: unknown;
  requestId?: string | null;
}

/** Secrets never reach the audit log, whatever object a caller passes in. */
const SECRET_KEYS = new Set(['password', 'passwordHash', 'keyHash', 'apiKey', 'secret', 'clientSecret', 'token']);

function scrub(value: unknown): unknown {
  if (value === null || value === undefined) return null;
  if (Array.isArray(value)) return value.map(scrub);
  if (value instanceof Date) return value.toISOString();
  if (typeof value === 'object') {
    return Object.fromEntries(Object.entries(value as Record<string, unknown>).map(([k, v]) => [k, SECRET_KEYS.has(k) ? '[redacted]' : scrub(v)]));
  }
  return value;
}

/** Writes one audit row inside the caller's transaction, so the change and its record commit together. */
export async function recordAudit(manager: EntityManager, event: AuditEvent): Promise<void> {
  const actor = actorOf(event.principal);
  await manager.insert(AuditEntryRow, {
    at: new Date(),
    ...actor,
    action: event.action,
    entityType: event.entityType,
    entityId: event.entityId,
    before: scrub(event.before) as object | null,
    after: scrub(event.after) as object | null,
    requestId: event.requestId ?? null,
  });
}

export function toAuditEntry(row: AuditEntryRow): AuditEntry {
  return {
    id: String(row.id),
    at: row.at.toISOString(),
    actorType: row.actorType,
    actorId: row.actorId,
    actorName: row.actorName,
    action: row.action,
    entityType: row.entityType,
    entityId: row.entityId,
    before: row.before ?? null,
    after: row.after ?? null,
    requestId: row.requestId,
  };
}

const SORTABLE: Record<string, string> = { at: 'a.at', action: 'a.action', entityType: 'a.entityType', actorName: 'a.actorName' };

export async function listAudit(ds: DataSource, q: AuditQuery): Promise<Page<AuditEntry>> {
  const qb = ds.getRepository(AuditEntryRow).createQueryBuilder('a');
  if (q.actor) qb.andWhere('(a.actor_name = :actor OR a.actor_id = :actor)', { actor: q.actor });
  if (q.action) qb.andWhere('a.action LIKE :action', { action: `${q.action}%` });
  if (q.entityType) qb.andWhere('a.entity_type = :entityType', { entityType: q.entityType });
  if (q.entityId) qb.andWhere('a.entity_id = :entityId', { entityId: q.entityId });
  if (q.from) qb.andWhere('a.at >= :from', { from: new Date(q.from) });
  if (q.to) qb.andWhere('a.at <= :to', { to: new Date(q.to) });
  qb.orderBy(sortColumn(SORTABLE, q.sort, 'a.at'), q.order === 'asc' ? 'ASC' : 'DESC').addOrderBy('a.id', q.order === 'asc' ? 'ASC' : 'DESC');
  const [rows, total] = await qb
    .skip((q.page - 1) * q.pageSize)
    .take(q.pageSize)
    .getManyAndCount();
  return { items: rows.map(toAuditEntry), page: q.page, pageSize: q.pageSize, total };
}
