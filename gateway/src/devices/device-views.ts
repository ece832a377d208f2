import type { Bed, Monitor, MonitorProfile } from '@ebbgate/shared';
import type { BedRow, MonitorProfileRow, MonitorRow } from './device.entities';

export function toProfile(row: MonitorProfileRow): MonitorProfile {
  return {
    id: row.id,
    name: row.name,
    manufacturer: row.manufacturer,
    model: row.model,
    transports: row.transports,
    channels: row.channels.map((c) => ({ ...c, gain: c.gain ?? 1, offset: c.offset ?? 0 })),
    defaultProbeSite: (row.defaultProbeSite as MonitorProfile['defaultProbeSite']) ?? null,
    plethScaling: row.plethScaling,
    notes: row.notes,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

export function toMonitor(row: MonitorRow, hasApiKey: boolean): Monitor {
  return {
    id: row.id,
    identifier: row.identifier,
    profileId: row.profileId,
    bedId: row.bedId,
    enabled: Boolean(row.enabled),
    lastSeenAt: row.lastSeenAt?.toISOString() ?? null,
    dataRate: row.dataRate,
    hasApiKey,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

export function toBed(row: BedRow, monitorId: string | null): Bed {
  return {
    id: row.id,
    name: row.name,
    unit: row.unit,
    locationIdentifier: row.locationIdentifier,
    checklist: row.checklist ?? null,
    monitorId,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}
