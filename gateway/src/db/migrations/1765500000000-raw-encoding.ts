import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * How an inbound message's raw body is kept: NULL = the bytes as received; 'deflate' = RFC 1951
 * raw DEFLATE of them (accepted batches, whose samples are also stored decoded: the raw body is
 * kept only to reproduce the message, so compressed). Older rows stay NULL.
 */
export class RawEncoding1765500000000 implements MigrationInterface {
  name = 'RawEncoding1765500000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query('ALTER TABLE inbound_message ADD COLUMN raw_encoding varchar(8) NULL AFTER raw');
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('ALTER TABLE inbound_message DROP COLUMN raw_encoding');
  }
}
