import 'reflect-metadata';
import { DataSource } from 'typeorm';
import { ENTITIES, MIGRATIONS } from './registry';

/** TypeORM over mysql2 (TypeORM 1.x drives MariaDB through mysql2 only). Migrations, never synchronize. */
/**
 * `queueLimit`: callers waiting for a pooled connection beyond this fail at once (mysql2 "Queue
 * limit reached"), so a stalled database turns into quick 503s instead of an unbounded backlog.
 */
export function createDataSource(url: string, poolSize = 20, queueLimit = 500): DataSource {
  return new DataSource({
    type: 'mariadb',
    url: url.replace(/^mariadb:/, 'mysql:'),
    entities: ENTITIES,
    migrations: MIGRATIONS,
    synchronize: false,
    migrationsRun: false,
    timezone: 'Z',
    dateStrings: false,
    supportBigNumbers: true,
    bigNumberStrings: true,
    poolSize,
    extra: { connectionLimit: poolSize, waitForConnections: true, queueLimit },
    logging: false,
  });
}

export async function migrate(ds: DataSource): Promise<string[]> {
  const applied = await ds.runMigrations({ transaction: 'each' });
  return applied.map((m) => m.name);
}

/**
 * Applies pending migrations as the migration user (`database.migrationUrl`), on a connection of
 * its own that is closed afterwards, so the gateway's pool only ever holds the data-only user.
 * Without a migration URL the runtime URL is used (it then needs DDL privileges).
 */
export async function migrateWith(database: { url: string; migrationUrl: string | null }): Promise<string[]> {
  const ds = await createDataSource(database.migrationUrl ?? database.url, 1).initialize();
  try {
    return await migrate(ds);
  } finally {
    await ds.destroy();
  }
}
