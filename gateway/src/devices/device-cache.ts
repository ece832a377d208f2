import type { DataSource } from 'typeorm';
import type { MonitorProfile } from '@ebbgate/shared';
import { MonitorProfileRow, MonitorRow } from './device.entities';
import { toProfile } from './device-views';

/** What ingest needs to know about a monitor, per batch. */
export interface MonitorForIngest {
  id: string;
  identifier: string;
  enabled: boolean;
  bedId: string | null;
  profile: MonitorProfile | null;
}

/**
 * Monitors and their profiles are read on every batch; a short-lived cache keeps that off the
 * database. Changes in this process clear it at once; other processes see them within TTL_MS.
 */
const TTL_MS = 5_000;
const byIdentifier = new Map<string, { value: MonitorForIngest | null; until: number }>();

export function forgetDevices(): void {
  byIdentifier.clear();
}

export async function monitorForIngest(ds: DataSource, identifier: string): Promise<MonitorForIngest | null> {
  const hit = byIdentifier.get(identifier);
  if (hit && hit.until > Date.now()) return hit.value;
  const monitor = await ds.getRepository(MonitorRow).findOneBy({ identifier });
  let value: MonitorForIngest | null = null;
  if (monitor) {
    const profileRow = monitor.profileId ? await ds.getRepository(MonitorProfileRow).findOneBy({ id: monitor.profileId }) : null;
    value = {
      id: monitor.id,
      identifier: monitor.identifier,
      enabled: monitor.enabled,
      bedId: monitor.bedId,
      profile: profileRow ? toProfile(profileRow) : null,
    };
  }
  if (byIdentifier.size > 20_000) byIdentifier.clear();
  byIdentifier.set(identifier, { value, until: Date.now() + TTL_MS });
  return value;
}
