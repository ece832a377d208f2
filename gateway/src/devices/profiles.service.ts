import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { monitorProfileInputSchema, type MonitorProfile, type MonitorProfileInput, type Page, type ProfileQuery } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { unitConversion } from '@ebbgate/shared/analysis';
import { badRequest, conflict, notFound } from '../http/problem';
import type { ChangeBy } from '../app-context';
import { isDuplicateKey, isReferenced } from '../db/errors';
import { MonitorProfileRow, MonitorRow } from './device.entities';
import { forgetDevices } from './device-cache';
import { likePattern, orderAndPage } from './device-paging';
import { toProfile } from './device-views';

const PROFILE_SORT: Record<string, string> = {
  name: 'p.name',
  manufacturer: 'p.manufacturer',
  model: 'p.model',
  createdAt: 'p.created_at',
  updatedAt: 'p.updated_at',
};

export async function listProfiles(ds: DataSource, q: ProfileQuery): Promise<Page<MonitorProfile>> {
  const qb = ds.getRepository(MonitorProfileRow).createQueryBuilder('p');
  if (q.search) qb.andWhere('(p.name LIKE :s OR p.manufacturer LIKE :s OR p.model LIKE :s)', { s: likePattern(q.search) });
  const [rows, total] = await orderAndPage(qb, q, PROFILE_SORT, ['p.name'], 'p.name').getManyAndCount();
  return { items: rows.map(toProfile), page: q.page, pageSize: q.pageSize, total };
}

export async function getProfile(ds: DataSource, id: string): Promise<MonitorProfile> {
  const row = await ds.getRepository(MonitorProfileRow).findOneBy({ id });
  if (!row) throw notFound(`Monitor profile ${id}`);
  return toProfile(row);
}

function fields(input: MonitorProfileInput) {
  const p = monitorProfileInputSchema.parse(input);
  // The unit after scaling must be one the analysis engine can convert, or every window fails later.
  const errors: { path: string; message: string }[] = [];
  p.channels.forEach((c, i) => {
    try {
      unitConversion(c.role, c.unit);
    } catch (err) {
      errors.push({ path: `channels.${i}.unit`, message: (err as Error).message });
    }
  });
  if (errors.length) throw badRequest('Some channel units are not understood by the analysis engine.', errors);
  return {
    name: p.name,
    manufacturer: p.manufacturer,
    model: p.model,
    transports: p.transports,
    channels: p.channels,
    defaultProbeSite: p.defaultProbeSite ?? null,
    plethScaling: p.plethScaling,
    notes: p.notes ?? null,
  };
}

export async function createProfile(ds: DataSource, input: MonitorProfileInput, by: ChangeBy): Promise<MonitorProfile> {
  try {
    return await ds.transaction(async (m) => {
      const now = new Date();
      const row = m.create(MonitorProfileRow, { id: randomUUID(), ...fields(input), createdAt: now, updatedAt: now });
      await m.insert(MonitorProfileRow, row);
      const out = toProfile(row);
      await recordAudit(m, {
        principal: by.principal,
        action: 'profile.create',
        entityType: 'monitor-profile',
        entityId: row.id,
        after: out,
        requestId: by.requestId,
      });
      return out;
    });
  } catch (err) {
    if (isDuplicateKey(err)) throw conflict(`A monitor profile named "${input.name}" exists already.`);
    throw err;
  }
}

export async function replaceProfile(ds: DataSource, id: string, input: MonitorProfileInput, by: ChangeBy): Promise<MonitorProfile> {
  try {
    const out = await ds.transaction(async (m) => {
      const row = await m.findOne(MonitorProfileRow, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!row) throw notFound(`Monitor profile ${id}`);
      const before = toProfile(row);
      Object.assign(row, fields(input), { updatedAt: new Date() });
      await m.save(row);
      const after = toProfile(row);
      await recordAudit(m, {
        principal: by.principal,
        action: 'profile.update',
        entityType: 'monitor-profile',
        entityId: id,
        before,
        after,
        requestId: by.requestId,
      });
      return after;
    });
    forgetDevices();
    return out;
  } catch (err) {
    if (isDuplicateKey(err)) throw conflict(`A monitor profile named "${input.name}" exists already.`);
    throw err;
  }
}

export async function deleteProfile(ds: DataSource, id: string, by: ChangeBy): Promise<void> {
  await ds.transaction(async (m) => {
    const row = await m.findOneBy(MonitorProfileRow, { id });
    if (!row) throw notFound(`Monitor profile ${id}`);
    const users = await m.countBy(MonitorRow, { profileId: id });
    if (users) throw conflict(`The profile is used by ${users} monitor(s); assign them another profile first.`);
    try {
      await m.delete(MonitorProfileRow, { id });
    } catch (err) {
      if (isReferenced(err)) throw conflict('The profile is still referenced.');
      throw err;
    }
    await recordAudit(m, {
      principal: by.principal,
      action: 'profile.delete',
      entityType: 'monitor-profile',
      entityId: id,
      before: toProfile(row),
      requestId: by.requestId,
    });
  });
  forgetDevices();
}
