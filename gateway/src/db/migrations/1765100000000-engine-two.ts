import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Engine 2.0: checklist context on beds (set by a person, audited), and the tidal volume challenge
 * result on the assessment of the window that completed it (with the step time, so a challenge is
 * judged once).
 */
export class EngineTwo1765100000000 implements MigrationInterface {
  name = 'EngineTwo1765100000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query('ALTER TABLE bed ADD COLUMN checklist longtext NULL');
    await q.query(`ALTER TABLE assessment
      ADD COLUMN tidal_volume_challenge longtext NULL,
      ADD COLUMN challenge_delta_ppv double NULL,
      ADD COLUMN challenge_verdict varchar(20) NULL,
      ADD COLUMN challenge_step_at datetime(3) NULL,
      ADD INDEX ix_assessment_challenge_step (monitor_id, challenge_step_at)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(
      'ALTER TABLE assessment DROP INDEX ix_assessment_challenge_step, DROP COLUMN challenge_step_at, DROP COLUMN challenge_verdict, DROP COLUMN challenge_delta_ppv, DROP COLUMN tidal_volume_challenge',
    );
    await q.query('ALTER TABLE bed DROP COLUMN checklist');
  }
}
