import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { MonitorRow } from '../../src/devices/device.entities';

/** Inserts a bare monitor row (no profile, no bed) for tests that only need one to exist. */
export async function insertMonitor(ds: DataSource, identifier = `TEST${randomUUID().slice(0, 12).toUpperCase()}`): Promise<MonitorRow> {
  const now = new Date();
  const row: MonitorRow = {
    id: randomUUID(),
    identifier,
    profileId: null,
    bedId: null,
    enabled: true,
    lastSeenAt: null,
    dataRate: null,
    createdAt: now,
    updatedAt: now,
  };
  await ds.getRepository(MonitorRow).insert(row);
  return row;
}
