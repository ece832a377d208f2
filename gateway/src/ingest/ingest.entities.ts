import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { Continuity, InboundOutcome, Transport } from '@ebbgate/shared';

/** Every inbound message exactly as received, with what became of it. Never deleted before retention. */
@Entity('inbound_message')
export class InboundMessageRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'received_at', type: 'datetime', precision: 3 }) receivedAt!: Date;
  @Column({ type: 'varchar', length: 8 }) transport!: Transport;
  @Column({ type: 'varchar', length: 16 }) outcome!: InboundOutcome;
  @Column({ type: 'text', nullable: true }) reason!: string | null;
  @Column({ name: 'monitor_id', type: 'varchar', length: 36, nullable: true }) monitorId!: string | null;
  @Column({ name: 'monitor_identifier', type: 'varchar', length: 64, nullable: true }) monitorIdentifier!: string | null;
  @Column({ name: 'batch_id', type: 'varchar', length: 128, nullable: true }) batchId!: string | null;
  /** `<monitor id>|<batch id>`, set only while the message's data is in storage: the idempotency key. */
  @Column({ name: 'batch_key', type: 'varchar', length: 200, nullable: true }) batchKey!: string | null;
  @Column({ name: 'content_hash', type: 'char', length: 64, nullable: true }) contentHash!: string | null;
  @Column({ name: 'size_bytes', type: 'int' }) sizeBytes!: number;
  @Column({ type: 'longblob' }) raw!: Buffer;
  /** How `raw` is kept (ingest/raw-body.ts): null = as received, 'deflate' = compressed. Read the body through rawBodyOf. */
  @Column({ name: 'raw_encoding', type: 'varchar', length: 8, nullable: true }) rawEncoding!: string | null;
  @Column({ name: 'batch_start', type: 'datetime', precision: 3, nullable: true }) batchStart!: Date | null;
  @Column({ type: 'text', nullable: true }) context!: string | null;
  @Column({ type: 'varchar', length: 12, nullable: true }) continuity!: Continuity | null;
  @Column({ name: 'continuity_ms', type: 'double', nullable: true }) continuityMs!: number | null;
  @Column({ name: 'handled_at', type: 'datetime', precision: 3, nullable: true }) handledAt!: Date | null;
  @Column({ name: 'handled_by', type: 'varchar', length: 64, nullable: true }) handledBy!: string | null;
  /** Who the edge authenticated (see ingest/sender.ts), null for a stranger; kept through reprocessing. */
  @Column({ type: 'varchar', length: 255, nullable: true }) sender!: string | null;
  @Column({ name: 'source_address', type: 'varchar', length: 64, nullable: true }) sourceAddress!: string | null;
  /** From an unauthenticated or unknown sender: only a prefix kept, own retention. */
  @Column({ type: 'boolean', default: false }) stranger!: boolean;
}

/** One channel of one batch: physical-unit float32 little-endian samples; sample i at start_time + i / sample_rate. */
@Entity('waveform_segment')
export class WaveformSegmentRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'monitor_id', type: 'varchar', length: 36 }) monitorId!: string;
  @Column({ name: 'inbound_message_id', type: 'bigint' }) inboundMessageId!: string;
  @Column({ name: 'channel_code', type: 'varchar', length: 64 }) channelCode!: string;
  @Column({ type: 'varchar', length: 8 }) role!: string;
  @Column({ type: 'varchar', length: 32 }) unit!: string;
  @Column({ name: 'sample_rate', type: 'double' }) sampleRate!: number;
  @Column({ name: 'start_time', type: 'datetime', precision: 3 }) startTime!: Date;
  @Column({ name: 'end_time', type: 'datetime', precision: 3 }) endTime!: Date;
  @Column({ name: 'sample_count', type: 'int' }) sampleCount!: number;
  /** The profile scaling that was applied (physical = gain × raw + offset), kept for traceability. */
  @Column({ type: 'double' }) gain!: number;
  @Column({ name: 'value_offset', type: 'double' }) offset!: number;
  @Column({ type: 'longblob' }) samples!: Buffer;
}
