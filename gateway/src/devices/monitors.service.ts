import { randomUUID } from 'node:crypto';
import { In, IsNull, type DataSource, type EntityManager } from 'typeorm';
import type { CreateMonitor, Monitor, MonitorQuery, Page, UpdateMonitor } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { conflict, notFound, unprocessable } from '../http/problem';
import type { ChangeBy } from '../app-context';
import { isDuplicateKey, isReferenced } from '../db/errors';
import { BedRow, DeviceKeyRow, MonitorProfileRow, MonitorRow } from './device.entities';
import { forgetDevices } from './device-cache';
import { likePattern, orderAndPage } from './device-paging';
import { toMonitor } from './device-views';

async function liveKeyMonitors(m: EntityManager | DataSource, monitorIds: string[]): Promise<Set<string>> {
  if (!monitorIds.length) return new Set();
  const keys = await m.getRepository(DeviceKeyRow).find({ where: { monitorId: In(monitorIds), revokedAt: IsNull() }, select: { monitorId: true } });
  return new Set(keys.map((k) => k.monitorId));
}

const MONITOR_SORT: Record<string, string> = {
  identifier: 'm.identifier',
  enabled: 'm.enabled',
  lastSeenAt: 'm.last_seen_at',
  dataRate: 'm.data_rate',
  createdAt: 'm.created_at',
  updatedAt: 'm.updated_at',
};

export async function listMonitors(ds: DataSource, q: MonitorQuery): Promise<Page<Monitor>> {
  const qb = ds.getRepository(MonitorRow).createQueryBuilder('m');
  if (q.profileId) qb.andWhere('m.profile_id = :profileId', { profileId: q.profileId });
  if (q.bedId) qb.andWhere('m.bed_id = :bedId', { bedId: q.bedId });
  if (q.enabled !== undefined) qb.andWhere('m.enabled = :enabled', { enabled: q.enabled });
  if (q.search) qb.andWhere('m.identifier LIKE :s', { s: likePattern(q.search) });
  const [rows, total] = await orderAndPage(qb, q, MONITOR_SORT, ['m.identifier'], 'm.identifier').getManyAndCount();
  const keyed = await liveKeyMonitors(
    ds,
    rows.map((r) => r.id),
  );
  return { items: rows.map((r) => toMonitor(r, keyed.has(r.id))), page: q.page, pageSize: q.pageSize, total };
}

export async function getMonitor(ds: DataSource, id: string): Promise<Monitor> {
  const row = await ds.getRepository(MonitorRow).findOneBy({ id });
  if (!row) throw notFound(`Monitor ${id}`);
  return toMonitor(row, (await liveKeyMonitors(ds, [id])).has(id));
}

/** Checks references a monitor points to, naming each bad field (422). */
async function checkReferences(m: EntityManager, monitorId: string | null, profileId: string | null | undefined, bedId: string | null | undefined) {
  const errors: { path: string; message: string }[] = [];
  if (profileId && !(await m.existsBy(MonitorProfileRow, { id: profileId }))) errors.push({ path: 'profileId', message: `no monitor profile ${profileId}` });
  if (bedId) {
    if (!(await m.existsBy(BedRow, { id: bedId }))) errors.push({ path: 'bedId', message: `no bed ${bedId}` });
    else {
      const other = await m.findOneBy(MonitorRow, { bedId });
      if (other && other.id !== monitorId) throw conflict(`Bed ${bedId} already has monitor ${other.identifier}; move that one first.`);
    }
  }
  if (errors.length) throw unprocessable('The monitor refers to something that does not exist.', errors);
}

export async function createMonitor(ds: DataSource, input: CreateMonitor, by: ChangeBy): Promise<Monitor> {
  try {
    return await ds.transaction(async (m) => {
      await checkReferences(m, null, input.profileId, input.bedId);
      const now = new Date();
      const row = m.create(MonitorRow, {
        id: randomUUID(),
        identifier: input.identifier,
        profileId: input.profileId ?? null,
        bedId: input.bedId ?? null,
        enabled: input.enabled ?? true,
        lastSeenAt: null,
        dataRate: null,
        receivedUntil: null,
        nextWindowStart: null,
        createdAt: now,
        updatedAt: now,
      });
      await m.insert(MonitorRow, row);
      const out = toMonitor(row, false);
      await recordAudit(m, { principal: by.principal, action: 'monitor.create', entityType: 'monitor', entityId: row.id, after: out, requestId: by.requestId });
      return out;
    });
  } catch (err) {
    if (isDuplicateKey(err)) throw conflict(`A monitor with identifier ${input.identifier} exists already.`);
    throw err;
  }
}

export async function updateMonitor(ds: DataSource, id: string, input: UpdateMonitor, by: ChangeBy): Promise<Monitor> {
  try {
    const out = await ds.transaction(async (m) => {
      const row = await m.findOne(MonitorRow, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!row) throw notFound(`Monitor ${id}`);
      await checkReferences(m, id, input.profileId, input.bedId);
      const keyed = (await liveKeyMonitors(m, [id])).has(id);
      const before = toMonitor(row, keyed);
      if (input.identifier !== undefined) row.identifier = input.identifier;
      if (input.profileId !== undefined) row.profileId = input.profileId;
      if (input.bedId !== undefined) row.bedId = input.bedId;
      if (input.enabled !== undefined) row.enabled = input.enabled;
      row.updatedAt = new Date();
      await m.save(row);
      const after = toMonitor(row, keyed);
      await recordAudit(m, { principal: by.principal, action: 'monitor.update', entityType: 'monitor', entityId: id, before, after, requestId: by.requestId });
      return after;
    });
    forgetDevices();
    return out;
  } catch (err) {
    if (isDuplicateKey(err)) throw conflict(`A monitor with identifier ${input.identifier} exists already.`);
    throw err;
  }
}

export async function deleteMonitor(ds: DataSource, id: string, by: ChangeBy): Promise<void> {
  try {
    await ds.transaction(async (m) => {
      const row = await m.findOneBy(MonitorRow, { id });
      if (!row) throw notFound(`Monitor ${id}`);
      await m.delete(MonitorRow, { id });
      await recordAudit(m, {
        principal: by.principal,
        action: 'monitor.delete',
        entityType: 'monitor',
        entityId: id,
        before: toMonitor(row, false),
        requestId: by.requestId,
      });
    });
  } catch (err) {
    if (isReferenced(err)) throw conflict('The monitor has stored assessments; disable it instead of deleting it.');
    throw err;
  }
  forgetDevices();
}
