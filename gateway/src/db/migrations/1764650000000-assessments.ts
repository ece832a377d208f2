import type { MigrationInterface, QueryRunner } from 'typeorm';

export class Assessments1764650000000 implements MigrationInterface {
  name = 'Assessments1764650000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE assessment (
      id varchar(36) NOT NULL PRIMARY KEY,
      monitor_id varchar(36) NOT NULL,
      bed_id varchar(36) NULL,
      window_start datetime(3) NOT NULL,
      window_end datetime(3) NOT NULL,
      engine_version varchar(32) NOT NULL,
      verdict varchar(16) NOT NULL,
      ppv double NULL,
      spv double NULL,
      delta_pop double NULL,
      perfusion_index double NULL,
      heart_rate double NULL,
      respiratory_rate double NULL,
      flags text NOT NULL,
      result longtext NOT NULL,
      entered_in_error_at datetime(3) NULL,
      entered_in_error_by varchar(64) NULL,
      entered_in_error_reason text NULL,
      created_at datetime(3) NOT NULL,
      UNIQUE KEY uq_assessment_window (monitor_id, window_start, engine_version),
      KEY idx_assessment_time (window_start),
      KEY idx_assessment_bed (bed_id, window_start),
      KEY idx_assessment_verdict (verdict, window_start),
      CONSTRAINT fk_assessment_monitor FOREIGN KEY (monitor_id) REFERENCES monitor (id)
    ) ENGINE=InnoDB`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('DROP TABLE assessment');
  }
}
