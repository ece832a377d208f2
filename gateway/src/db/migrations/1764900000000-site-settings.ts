import type { MigrationInterface, QueryRunner } from 'typeorm';

export class SiteSettings1764900000000 implements MigrationInterface {
  name = 'SiteSettings1764900000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE site_setting (
      section varchar(64) NOT NULL PRIMARY KEY,
      value longtext NOT NULL,
      updated_at datetime(3) NOT NULL,
      updated_by varchar(64) NULL
    ) ENGINE=InnoDB`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query('DROP TABLE site_setting');
  }
}
