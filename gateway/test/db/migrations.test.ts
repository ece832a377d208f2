import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DataSource } from 'typeorm';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { createDataSource, migrate } from '../../src/db/data-source';
import { MIGRATIONS } from '../../src/db/registry';

let db: TestDatabase;
let ds: DataSource;
beforeAll(async () => {
  db = await createTestDatabase();
  ds = await createDataSource(db.url, 2).initialize();
});
afterAll(async () => {
  await ds?.destroy();
  await db?.drop();
});

const tables = async () =>
  ((await ds.query('SELECT table_name AS t FROM information_schema.tables WHERE table_schema = DATABASE()')) as { t: string }[])
    .map((r) => r.t)
    .filter((t) => t !== 'migrations')
    .sort();

describe('migrations', () => {
  it('apply from an empty database, in order, each once', async () => {
    expect(await tables()).toEqual([]);
    const applied = await migrate(ds);
    expect(applied).toEqual(MIGRATIONS.map((M) => new M().name));
    expect(await tables()).toEqual(expect.arrayContaining(['app_user', 'audit_entry', 'monitor', 'assessment']));
    expect(await migrate(ds)).toEqual([]);
  });

  it('revert one by one back to an empty database', async () => {
    for (let i = 0; i < MIGRATIONS.length; i++) await ds.undoLastMigration({ transaction: 'each' });
    expect(await tables()).toEqual([]);
    expect(await migrate(ds)).toHaveLength(MIGRATIONS.length);
  });
});
