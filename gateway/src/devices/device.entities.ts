import { Column, Entity, PrimaryColumn } from 'typeorm';
import type { ChecklistContext } from '@ebbgate/shared';

/** One channel of a monitor model: inbound code → role, unit, scaling, rate, filtering. */
export interface ProfileChannel {
  code: string;
  label?: string;
  role: 'abp' | 'pleth' | 'paw' | 'co2';
  unit: string;
  gain: number;
  offset: number;
  sampleRate: number;
  builtInFiltering?: string;
}

@Entity('monitor_profile')
export class MonitorProfileRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ type: 'varchar', length: 128, unique: true }) name!: string;
  @Column({ type: 'varchar', length: 128 }) manufacturer!: string;
  @Column({ type: 'varchar', length: 128 }) model!: string;
  @Column({ type: 'simple-json' }) transports!: ('http' | 'mllp')[];
  @Column({ type: 'simple-json' }) channels!: ProfileChannel[];
  @Column({ name: 'default_probe_site', type: 'varchar', length: 16, nullable: true }) defaultProbeSite!: string | null;
  @Column({ name: 'pleth_scaling', type: 'varchar', length: 16, default: 'raw' }) plethScaling!: 'raw' | 'auto-scaled';
  @Column({ type: 'text', nullable: true }) notes!: string | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'updated_at', type: 'datetime', precision: 3 }) updatedAt!: Date;
}

@Entity('bed')
export class BedRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ type: 'varchar', length: 64, unique: true }) name!: string;
  @Column({ type: 'varchar', length: 64 }) unit!: string;
  /** The EHR Location identifier (system|value as the EHR knows it). */
  @Column({ name: 'location_identifier', type: 'varchar', length: 128 }) locationIdentifier!: string;
  /** Checklist context set on the bed by a person (audited), or null. */
  @Column({ type: 'simple-json', nullable: true }) checklist?: ChecklistContext | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'updated_at', type: 'datetime', precision: 3 }) updatedAt!: Date;
}

@Entity('monitor')
export class MonitorRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  /** EUI-64 or serial number, as the monitor or adapter reports itself. */
  @Column({ type: 'varchar', length: 64, unique: true }) identifier!: string;
  @Column({ name: 'profile_id', type: 'varchar', length: 36, nullable: true }) profileId!: string | null;
  @Column({ name: 'bed_id', type: 'varchar', length: 36, nullable: true }) bedId!: string | null;
  @Column({ type: 'boolean', default: true }) enabled!: boolean;
  @Column({ name: 'last_seen_at', type: 'datetime', precision: 3, nullable: true }) lastSeenAt!: Date | null;
  /** Samples per second over the last batches, all channels together. */
  @Column({ name: 'data_rate', type: 'double', nullable: true }) dataRate!: number | null;
  /** End of the latest data received (stream position), for gap/overlap detection. */
  @Column({ name: 'received_until', type: 'datetime', precision: 3, nullable: true }) receivedUntil?: Date | null;
  /** Start of the next analysis window to plan; null until the first batch. */
  @Column({ name: 'next_window_start', type: 'datetime', precision: 3, nullable: true }) nextWindowStart?: Date | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'updated_at', type: 'datetime', precision: 3 }) updatedAt!: Date;
}

/** A monitor's API key: only a SHA-256 of the secret is kept; the key is shown once. */
@Entity('device_key')
export class DeviceKeyRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ name: 'monitor_id', type: 'varchar', length: 36 }) monitorId!: string;
  @Column({ name: 'key_hash', type: 'char', length: 64 }) keyHash!: string;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'revoked_at', type: 'datetime', precision: 3, nullable: true }) revokedAt!: Date | null;
  @Column({ name: 'last_used_at', type: 'datetime', precision: 3, nullable: true }) lastUsedAt!: Date | null;
}
