import type { MigrationInterface, QueryRunner } from 'typeorm';

/** Inbound messages (raw, always kept), waveform segments (float32 BLOBs), analysis windows. */
export class Ingest1764700000001 implements MigrationInterface {
  name = 'Ingest1764700000001';

  async up(q: QueryRunner): Promise<void> {
    // Stream position per monitor: how far contiguous data reaches and where the next window starts.
    await q.query(`ALTER TABLE monitor
      ADD COLUMN received_until datetime(3) NULL,
      ADD COLUMN next_window_start datetime(3) NULL,
      ADD KEY idx_monitor_window (next_window_start)`);
    await q.query(`CREATE TABLE inbound_message (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      received_at datetime(3) NOT NULL,
      transport varchar(8) NOT NULL,
      outcome varchar(16) NOT NULL,
      reason text NULL,
      monitor_id varchar(36) NULL,
      monitor_identifier varchar(64) NULL,
      batch_id varchar(128) NULL,
      batch_key varchar(200) NULL,
      content_hash char(64) NULL,
      size_bytes int NOT NULL,
      raw longblob NOT NULL,
      batch_start datetime(3) NULL,
      context text NULL,
      continuity varchar(12) NULL,
      continuity_ms double NULL,
      handled_at datetime(3) NULL,
      handled_by varchar(64) NULL,
      UNIQUE KEY uq_inbound_batch (batch_key),
      KEY idx_inbound_time (received_at),
      KEY idx_inbound_outcome (outcome, received_at),
      KEY idx_inbound_monitor (monitor_identifier, received_at)
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE waveform_segment (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      monitor_id varchar(36) NOT NULL,
      inbound_message_id bigint NOT NULL,
      channel_code varchar(64) NOT NULL,
      role varchar(8) NOT NULL,
      unit varchar(32) NOT NULL,
      sample_rate double NOT NULL,
      start_time datetime(3) NOT NULL,
      end_time datetime(3) NOT NULL,
      sample_count int NOT NULL,
      gain double NOT NULL,
      value_offset double NOT NULL,
      samples longblob NOT NULL,
      KEY idx_segment_window (monitor_id, role, start_time),
      KEY idx_segment_time (start_time)
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE analysis_window (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      monitor_id varchar(36) NOT NULL,
      window_start datetime(3) NOT NULL,
      window_end datetime(3) NOT NULL,
      engine_version varchar(32) NOT NULL,
      status varchar(12) NOT NULL,
      attempts int NOT NULL DEFAULT 0,
      claimed_by varchar(64) NULL,
      assessment_id varchar(36) NULL,
      last_error text NULL,
      created_at datetime(3) NOT NULL,
      done_at datetime(3) NULL,
      UNIQUE KEY uq_window (monitor_id, window_start, engine_version),
      KEY idx_window_status (status, id)
    ) ENGINE=InnoDB`);
    // The patient the window belongs to, when a capability that knows it (EHR context) sets it.
    await q.query(`ALTER TABLE assessment
      ADD COLUMN patient_ref varchar(128) NULL,
      ADD KEY idx_assessment_patient (patient_ref, window_start)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('ALTER TABLE assessment DROP KEY idx_assessment_patient, DROP COLUMN patient_ref');
    for (const t of ['analysis_window', 'waveform_segment', 'inbound_message']) await q.query(`DROP TABLE ${t}`);
    await q.query('ALTER TABLE monitor DROP KEY idx_monitor_window, DROP COLUMN next_window_start, DROP COLUMN received_until');
  }
}
