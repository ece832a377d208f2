import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Delivery reliability: a fencing token on outbox claims (claim_id, checked on every state
 * change), the patient's name and MRN kept with deliveries and assessments, the encounter a
 * result was filed under, and alert mail as its own outbox (claimed, sent, marked).
 */
export class DeliveryReliability1765400000000 implements MigrationInterface {
  name = 'DeliveryReliability1765400000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE delivery
      ADD COLUMN claim_id varchar(36) NULL,
      ADD COLUMN claimed_at datetime(3) NULL,
      ADD COLUMN encounter_ref varchar(128) NULL,
      ADD COLUMN patient_name varchar(200) NULL,
      ADD COLUMN patient_mrn varchar(64) NULL`);
    await q.query(`ALTER TABLE assessment
      ADD COLUMN patient_name varchar(200) NULL,
      ADD COLUMN patient_mrn varchar(64) NULL`);
    await q.query(`CREATE TABLE alert_mail (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      incident_id bigint NOT NULL,
      event varchar(16) NOT NULL,
      message_id varchar(200) NOT NULL,
      status varchar(16) NOT NULL,
      claim_id varchar(36) NULL,
      claimed_until datetime(3) NULL,
      tries int NOT NULL DEFAULT 0,
      last_error text NULL,
      created_at datetime(3) NOT NULL,
      sent_at datetime(3) NULL,
      UNIQUE KEY uq_alert_mail_event (incident_id, event),
      KEY idx_alert_mail_due (status, claimed_until),
      CONSTRAINT fk_alert_mail_incident FOREIGN KEY (incident_id) REFERENCES alert_incident (id)
    ) ENGINE=InnoDB`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('DROP TABLE alert_mail');
    await q.query('ALTER TABLE assessment DROP COLUMN patient_name, DROP COLUMN patient_mrn');
    await q.query(
      'ALTER TABLE delivery DROP COLUMN claim_id, DROP COLUMN claimed_at, DROP COLUMN encounter_ref, DROP COLUMN patient_name, DROP COLUMN patient_mrn',
    );
  }
}
