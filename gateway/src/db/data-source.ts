import 'reflect-metadata';
import { DataSource } from 'typeorm';
import { ENTITIES, MIGRATIONS } from './registry';

/** TypeORM over mysql2 (TypeORM 1.x drives MariaDB through mysql2 only). Migrations, never synchronize. */
export function createDataSource(url: string, poolSize = 20): DataSource {
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
    extra: { connectionLimit: poolSize, waitForConnections: true },
    logging: false,
  });
}

export async function migrate(ds: DataSource): Promise<string[]> {
  const applied = await ds.runMigrations({ transaction: 'each' });
  return applied.map((m) => m.name);
}
