import { Column, Entity, PrimaryColumn } from 'typeorm';

/**
 * One analysed window of one monitor: the engine's full result (cycles, beats, flags) plus the
 * headline values as columns for filtering. Re-analysis with a newer engine adds a row; both stay.
 */
@Entity('assessment')
export class AssessmentRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ name: 'monitor_id', type: 'varchar', length: 36 }) monitorId!: string;
  /** Bed at the time of the window (monitors move). */
  @Column({ name: 'bed_id', type: 'varchar', length: 36, nullable: true }) bedId!: string | null;
  @Column({ name: 'window_start', type: 'datetime', precision: 3 }) windowStart!: Date;
  @Column({ name: 'window_end', type: 'datetime', precision: 3 }) windowEnd!: Date;
  @Column({ name: 'engine_version', type: 'varchar', length: 32 }) engineVersion!: string;
  @Column({ type: 'varchar', length: 16 }) verdict!: 'valid' | 'questionable' | 'not-valid';
  @Column({ type: 'double', nullable: true }) ppv!: number | null;
  @Column({ type: 'double', nullable: true }) spv!: number | null;
  @Column({ name: 'delta_pop', type: 'double', nullable: true }) deltaPop!: number | null;
  @Column({ name: 'perfusion_index', type: 'double', nullable: true }) perfusionIndex!: number | null;
  @Column({ name: 'heart_rate', type: 'double', nullable: true }) heartRate!: number | null;
  @Column({ name: 'respiratory_rate', type: 'double', nullable: true }) respiratoryRate!: number | null;
  /** Flag codes, for filtering; the full flags live in `result`. */
  @Column({ type: 'simple-json' }) flags!: string[];
  /** The engine's AnalysisResult, as JSON. */
  @Column({ type: 'simple-json' }) result!: object;
  @Column({ name: 'entered_in_error_at', type: 'datetime', precision: 3, nullable: true }) enteredInErrorAt!: Date | null;
  @Column({ name: 'entered_in_error_by', type: 'varchar', length: 64, nullable: true }) enteredInErrorBy!: string | null;
  @Column({ name: 'entered_in_error_reason', type: 'text', nullable: true }) enteredInErrorReason!: string | null;
  /** Tidal volume challenge completed by this window (TidalVolumeChallengeResult as JSON), or null. */
  @Column({ name: 'tidal_volume_challenge', type: 'simple-json', nullable: true }) tidalVolumeChallenge!: object | null;
  @Column({ name: 'challenge_delta_ppv', type: 'double', nullable: true }) challengeDeltaPpv!: number | null;
  @Column({ name: 'challenge_verdict', type: 'varchar', length: 20, nullable: true }) challengeVerdict!: 'positive' | 'negative' | 'cannot-be-judged' | null;
  /** When the tidal volume was raised (so each challenge is judged once). */
  @Column({ name: 'challenge_step_at', type: 'datetime', precision: 3, nullable: true }) challengeStepAt!: Date | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
}
