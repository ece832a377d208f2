import { randomUUID } from 'node:crypto';
import { In, type DataSource } from 'typeorm';
import type { Bed, BedInput, BedQuery, Page } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { conflict, notFound } from '../http/problem';
import type { ChangeBy } from '../app-context';
import { isDuplicateKey } from '../db/errors';
import { BedRow, MonitorRow } from './device.entities';
import { forgetDevices } from './device-cache';
import { likePattern, orderAndPage } from './device-paging';
import { toBed } from './device-views';

/** Told the location identifiers of a bed that was changed or removed (delivery drops its cached patient context). */
export const bedReassigned: ((locationIdentifiers: string[]) => void)[] = [];

/** The monitor on each of the given beds (a bed holds at most one). */
async function monitorsByBed(ds: DataSource, bedIds: string[]): Promise<Map<string, string>> {
  if (!bedIds.length) return new Map();
  const rows = await ds.getRepository(MonitorRow).find({ where: { bedId: In(bedIds) }, select: { id: true, bedId: true } });
  return new Map(rows.map((r) => [r.bedId as string, r.id]));
}

const BED_SORT: Record<string, string> = {
  name: 'b.name',
  unit: 'b.unit',
  locationIdentifier: 'b.location_identifier',
  createdAt: 'b.created_at',
  updatedAt: 'b.updated_at',
};

export async function listBeds(ds: DataSource, q: BedQuery): Promise<Page<Bed>> {
  const qb = ds.getRepository(BedRow).createQueryBuilder('b');
  if (q.unit) qb.andWhere('b.unit = :unit', { unit: q.unit });
  if (q.search) qb.andWhere('(b.name LIKE :s OR b.unit LIKE :s OR b.location_identifier LIKE :s)', { s: likePattern(q.search) });
  // Unsorted, beds come unit by unit, then by name.
  const [rows, total] = await orderAndPage(qb, q, BED_SORT, ['b.unit', 'b.name'], 'b.name').getManyAndCount();
  const assigned = await monitorsByBed(
    ds,
    rows.map((r) => r.id),
  );
  return { items: rows.map((r) => toBed(r, assigned.get(r.id) ?? null)), page: q.page, pageSize: q.pageSize, total };
}

export async function getBed(ds: DataSource, id: string): Promise<Bed> {
  const row = await ds.getRepository(BedRow).findOneBy({ id });
  if (!row) throw notFound(`Bed ${id}`);
  const monitor = await ds.getRepository(MonitorRow).findOneBy({ bedId: id });
  return toBed(row, monitor?.id ?? null);
}

export async function createBed(ds: DataSource, input: BedInput & { id?: string }, by: ChangeBy): Promise<Bed> {
  try {
    return await ds.transaction(async (m) => {
      const now = new Date();
      const row = m.create(BedRow, {
        id: input.id ?? randomUUID(),
        name: input.name,
        unit: input.unit,
        locationIdentifier: input.locationIdentifier,
        checklist: input.checklist ?? null,
        createdAt: now,
        updatedAt: now,
      });
      await m.insert(BedRow, row);
      const out = toBed(row, null);
      await recordAudit(m, { principal: by.principal, action: 'bed.create', entityType: 'bed', entityId: row.id, after: out, requestId: by.requestId });
      return out;
    });
  } catch (err) {
    if (isDuplicateKey(err)) throw conflict(`A bed named "${input.name}" exists already.`);
    throw err;
  }
}

export async function updateBed(ds: DataSource, id: string, input: Partial<BedInput>, by: ChangeBy): Promise<Bed> {
  let previousLocation: string | undefined;
  try {
    const out = await ds.transaction(async (m) => {
      const row = await m.findOne(BedRow, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!row) throw notFound(`Bed ${id}`);
      previousLocation = row.locationIdentifier;
      const monitor = await m.findOneBy(MonitorRow, { bedId: id });
      const before = toBed(row, monitor?.id ?? null);
      Object.assign(row, input, { updatedAt: new Date() });
      await m.save(row);
      const after = toBed(row, monitor?.id ?? null);
      await recordAudit(m, { principal: by.principal, action: 'bed.update', entityType: 'bed', entityId: id, before, after, requestId: by.requestId });
      return after;
    });
    forgetDevices();
    for (const h of bedReassigned) h([out.locationIdentifier, ...(previousLocation ? [previousLocation] : [])]);
    return out;
  } catch (err) {
    if (isDuplicateKey(err)) throw conflict(`A bed named "${input.name}" exists already.`);
    throw err;
  }
}

export async function deleteBed(ds: DataSource, id: string, by: ChangeBy): Promise<void> {
  let previousLocation: string | undefined;
  await ds.transaction(async (m) => {
    const row = await m.findOneBy(BedRow, { id });
    if (!row) throw notFound(`Bed ${id}`);
    // The monitor's bed_id is set to NULL by the foreign key; the audit entry says which one moved out.
    const monitor = await m.findOneBy(MonitorRow, { bedId: id });
    await m.delete(BedRow, { id });
    await recordAudit(m, {
      principal: by.principal,
      action: 'bed.delete',
      entityType: 'bed',
      entityId: id,
      before: toBed(row, monitor?.id ?? null),
      requestId: by.requestId,
    });
    previousLocation = row.locationIdentifier;
  });
  forgetDevices();
  for (const h of bedReassigned) h(previousLocation ? [previousLocation] : []);
}
