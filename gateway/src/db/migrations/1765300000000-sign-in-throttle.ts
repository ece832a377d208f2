import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Failed sign-ins per account (the username as typed, whether or not it exists, so the answer
 * cannot tell them apart) and per source address, counted by the database itself
 * (INSERT … ON DUPLICATE KEY UPDATE), so parallel guesses each count.
 */
export class SignInThrottle1765300000000 implements MigrationInterface {
  name = 'SignInThrottle1765300000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE sign_in_throttle (
      scope varchar(8) NOT NULL,
      subject varchar(128) NOT NULL,
      failures int NOT NULL,
      last_failure_at datetime(3) NOT NULL,
      blocked_until datetime(3) NULL,
      PRIMARY KEY (scope, subject)
    ) ENGINE=InnoDB`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('DROP TABLE sign_in_throttle');
  }
}
