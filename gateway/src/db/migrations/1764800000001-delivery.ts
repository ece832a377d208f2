import type { MigrationInterface, QueryRunner } from 'typeorm';

export class Delivery1764800000001 implements MigrationInterface {
  name = 'Delivery1764800000001';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE destination (
      id varchar(64) NOT NULL PRIMARY KEY,
      name varchar(128) NOT NULL,
      kind varchar(16) NOT NULL,
      paused tinyint NOT NULL DEFAULT 0,
      paused_at datetime(3) NULL,
      paused_by varchar(64) NULL,
      circuit_state varchar(16) NOT NULL DEFAULT 'closed',
      consecutive_failures int NOT NULL DEFAULT 0,
      circuit_opened_at datetime(3) NULL,
      down_since datetime(3) NULL,
      last_success_at datetime(3) NULL,
      last_failure_at datetime(3) NULL,
      last_error text NULL,
      configuration_error text NULL,
      updated_at datetime(3) NOT NULL
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE delivery (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      assessment_id varchar(36) NOT NULL,
      destination_id varchar(64) NOT NULL,
      index_name varchar(32) NOT NULL,
      kind varchar(16) NOT NULL,
      status varchar(16) NOT NULL,
      identifier varchar(128) NOT NULL,
      payload longtext NULL,
      server_id varchar(64) NULL,
      patient_ref varchar(128) NULL,
      tries int NOT NULL DEFAULT 0,
      attempt_count int NOT NULL DEFAULT 0,
      next_attempt_at datetime(3) NOT NULL,
      last_http_status int NULL,
      last_error text NULL,
      discard_reason text NULL,
      discarded_by varchar(64) NULL,
      created_at datetime(3) NOT NULL,
      updated_at datetime(3) NOT NULL,
      delivered_at datetime(3) NULL,
      UNIQUE KEY uq_delivery_result (assessment_id, destination_id, index_name, kind),
      KEY idx_delivery_due (status, next_attempt_at),
      KEY idx_delivery_destination (destination_id, status, updated_at),
      KEY idx_delivery_updated (updated_at),
      CONSTRAINT fk_delivery_assessment FOREIGN KEY (assessment_id) REFERENCES assessment (id),
      CONSTRAINT fk_delivery_destination FOREIGN KEY (destination_id) REFERENCES destination (id)
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE delivery_attempt (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      delivery_id bigint NOT NULL,
      at datetime(3) NOT NULL,
      duration_ms int NOT NULL,
      http_status int NULL,
      outcome varchar(24) NOT NULL,
      detail text NULL,
      response longtext NULL,
      mode varchar(16) NOT NULL,
      KEY idx_attempt_delivery (delivery_id, at),
      KEY idx_attempt_time (at, outcome),
      CONSTRAINT fk_attempt_delivery FOREIGN KEY (delivery_id) REFERENCES delivery (id)
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE alert_incident (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      destination_id varchar(64) NOT NULL,
      kind varchar(16) NOT NULL,
      open_key varchar(96) NULL,
      opened_at datetime(3) NOT NULL,
      cleared_at datetime(3) NULL,
      detail text NOT NULL,
      opened_mail_at datetime(3) NULL,
      cleared_mail_at datetime(3) NULL,
      UNIQUE KEY uq_incident_open (open_key),
      KEY idx_incident_destination (destination_id, opened_at)
    ) ENGINE=InnoDB`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('DROP TABLE alert_incident');
    await q.query('DROP TABLE delivery_attempt');
    await q.query('DROP TABLE delivery');
    await q.query('DROP TABLE destination');
  }
}
