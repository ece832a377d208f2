import type { MigrationInterface, QueryRunner } from 'typeorm';

export class Foundation1764600000000 implements MigrationInterface {
  name = 'Foundation1764600000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE app_user (
      id varchar(36) NOT NULL PRIMARY KEY,
      username varchar(64) NOT NULL UNIQUE,
      display_name varchar(128) NOT NULL,
      password_hash varchar(255) NOT NULL,
      roles text NOT NULL,
      disabled tinyint(1) NOT NULL DEFAULT 0,
      failed_attempts int NOT NULL DEFAULT 0,
      locked_until datetime(3) NULL,
      last_sign_in_at datetime(3) NULL,
      password_changed_at datetime(3) NOT NULL,
      created_at datetime(3) NOT NULL
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE user_session (
      id varchar(36) NOT NULL PRIMARY KEY,
      user_id varchar(36) NOT NULL,
      created_at datetime(3) NOT NULL,
      expires_at datetime(3) NOT NULL,
      revoked_at datetime(3) NULL,
      KEY idx_user_session_user (user_id),
      CONSTRAINT fk_user_session_user FOREIGN KEY (user_id) REFERENCES app_user (id) ON DELETE CASCADE
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE audit_entry (
      id bigint NOT NULL AUTO_INCREMENT PRIMARY KEY,
      at datetime(3) NOT NULL,
      actor_type varchar(16) NOT NULL,
      actor_id varchar(64) NULL,
      actor_name varchar(128) NULL,
      action varchar(64) NOT NULL,
      entity_type varchar(64) NOT NULL,
      entity_id varchar(64) NULL,
      \`before\` longtext NULL,
      \`after\` longtext NULL,
      request_id varchar(64) NULL,
      KEY idx_audit_at (at),
      KEY idx_audit_entity (entity_type, entity_id),
      KEY idx_audit_action (action)
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TRIGGER audit_entry_no_update BEFORE UPDATE ON audit_entry FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_entry is append-only'`);
    await q.query(`CREATE TRIGGER audit_entry_no_delete BEFORE DELETE ON audit_entry FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_entry is append-only'`);
    await q.query(`CREATE TABLE monitor_profile (
      id varchar(36) NOT NULL PRIMARY KEY,
      name varchar(128) NOT NULL UNIQUE,
      manufacturer varchar(128) NOT NULL,
      model varchar(128) NOT NULL,
      transports text NOT NULL,
      channels longtext NOT NULL,
      default_probe_site varchar(16) NULL,
      pleth_scaling varchar(16) NOT NULL DEFAULT 'raw',
      notes text NULL,
      created_at datetime(3) NOT NULL,
      updated_at datetime(3) NOT NULL
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE bed (
      id varchar(36) NOT NULL PRIMARY KEY,
      name varchar(64) NOT NULL UNIQUE,
      unit varchar(64) NOT NULL,
      location_identifier varchar(128) NOT NULL,
      created_at datetime(3) NOT NULL,
      updated_at datetime(3) NOT NULL
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE monitor (
      id varchar(36) NOT NULL PRIMARY KEY,
      identifier varchar(64) NOT NULL UNIQUE,
      profile_id varchar(36) NULL,
      bed_id varchar(36) NULL,
      enabled tinyint(1) NOT NULL DEFAULT 1,
      last_seen_at datetime(3) NULL,
      data_rate double NULL,
      created_at datetime(3) NOT NULL,
      updated_at datetime(3) NOT NULL,
      CONSTRAINT fk_monitor_profile FOREIGN KEY (profile_id) REFERENCES monitor_profile (id),
      CONSTRAINT fk_monitor_bed FOREIGN KEY (bed_id) REFERENCES bed (id) ON DELETE SET NULL
    ) ENGINE=InnoDB`);
    await q.query(`CREATE TABLE device_key (
      id varchar(36) NOT NULL PRIMARY KEY,
      monitor_id varchar(36) NOT NULL,
      key_hash char(64) NOT NULL,
      created_at datetime(3) NOT NULL,
      revoked_at datetime(3) NULL,
      last_used_at datetime(3) NULL,
      KEY idx_device_key_monitor (monitor_id),
      CONSTRAINT fk_device_key_monitor FOREIGN KEY (monitor_id) REFERENCES monitor (id) ON DELETE CASCADE
    ) ENGINE=InnoDB`);
  }

  async down(q: QueryRunner): Promise<void> {
    for (const t of ['device_key', 'monitor', 'bed', 'monitor_profile']) await q.query(`DROP TABLE ${t}`);
    await q.query('DROP TRIGGER audit_entry_no_delete');
    await q.query('DROP TRIGGER audit_entry_no_update');
    for (const t of ['audit_entry', 'user_session', 'app_user']) await q.query(`DROP TABLE ${t}`);
  }
}
