import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The device edge: credentials registered on a monitor or its profile (client certificate
 * SHA-256 fingerprints or subjects for MLLP over TLS, source addresses or CIDRs for plain
 * MLLP), and on every inbound message who sent it (the authenticated sender and the source
 * address), whether it came from a stranger (only a prefix kept) and, for a conflicting stream,
 * the stored message it overlapped.
 */
export class EdgeSecurity1765200000000 implements MigrationInterface {
  name = 'EdgeSecurity1765200000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE edge_credential (
      id varchar(36) NOT NULL PRIMARY KEY,
      scope varchar(8) NOT NULL,
      scope_id varchar(36) NOT NULL,
      kind varchar(24) NOT NULL,
      value varchar(255) NOT NULL,
      note varchar(255) NULL,
      created_at datetime(3) NOT NULL,
      created_by varchar(64) NULL,
      UNIQUE KEY uq_edge_credential (scope, scope_id, kind, value),
      KEY idx_edge_credential_value (kind, value)
    ) ENGINE=InnoDB`);
    await q.query(`ALTER TABLE inbound_message
      ADD COLUMN sender varchar(255) NULL,
      ADD COLUMN source_address varchar(64) NULL,
      ADD COLUMN stranger tinyint(1) NOT NULL DEFAULT 0,
      ADD KEY idx_inbound_stranger (stranger, received_at)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('ALTER TABLE inbound_message DROP KEY idx_inbound_stranger, DROP COLUMN stranger, DROP COLUMN source_address, DROP COLUMN sender');
    await q.query('DROP TABLE edge_credential');
  }
}
