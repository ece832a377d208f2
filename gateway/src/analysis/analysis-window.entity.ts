import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';

/**
 * One window of one monitor to analyse with one engine version. Unique per (monitor, start,
 * engine version), so planning is idempotent across processes; workers claim `due` rows with
 * SELECT … FOR UPDATE SKIP LOCKED.
 */
@Entity('analysis_window')
export class AnalysisWindowRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'monitor_id', type: 'varchar', length: 36 }) monitorId!: string;
  @Column({ name: 'window_start', type: 'datetime', precision: 3 }) windowStart!: Date;
  @Column({ name: 'window_end', type: 'datetime', precision: 3 }) windowEnd!: Date;
  @Column({ name: 'engine_version', type: 'varchar', length: 32 }) engineVersion!: string;
  @Column({ type: 'varchar', length: 12 }) status!: 'due' | 'done' | 'failed';
  @Column({ type: 'int', default: 0 }) attempts!: number;
  @Column({ name: 'claimed_by', type: 'varchar', length: 64, nullable: true }) claimedBy!: string | null;
  @Column({ name: 'assessment_id', type: 'varchar', length: 36, nullable: true }) assessmentId!: string | null;
  @Column({ name: 'last_error', type: 'text', nullable: true }) lastError!: string | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'done_at', type: 'datetime', precision: 3, nullable: true }) doneAt!: Date | null;
}
