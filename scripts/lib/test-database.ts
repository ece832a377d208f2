/**
 * Throwaway databases for tests. The test runner (scripts/test.ts, or the vitest global setup
 * when a suite is run alone) provides EBBGATE_TEST_ADMIN_URL: an account allowed to create
 * databases and users. Each test file gets its own database and its two users: `runtimeUrl` (the
 * application user, data privileges only, as the gateway runs) and `url` (the migration user, all
 * privileges on that database: for migrations and for tests that reach into the schema).
 */
import { randomBytes } from 'node:crypto';
import * as mariadb from 'mariadb';
import { migrationCredentials, provisionDatabase } from './mariadb';

export interface TestDatabase {
  /** The migration user (DDL): pass as `database.migrationUrl`, or use for schema-level checks. */
  url: string;
  /** The application user (SELECT, INSERT, UPDATE, DELETE only): pass as `database.url`. */
  runtimeUrl: string;
  name: string;
  drop(): Promise<void>;
}

function adminUrl(): string {
  const url = process.env.EBBGATE_TEST_ADMIN_URL;
  if (!url) throw new Error('EBBGATE_TEST_ADMIN_URL is not set: run tests through `npm test` or vitest (global setup starts MariaDB)');
  return url;
}

async function adminConnection(): Promise<mariadb.Connection> {
  const u = new URL(adminUrl());
  return mariadb.createConnection({
    host: u.hostname,
    port: Number(u.port || 3306),
    user: decodeURIComponent(u.username),
    password: decodeURIComponent(u.password),
  });
}

export async function createTestDatabase(): Promise<TestDatabase> {
  const suffix = randomBytes(5).toString('hex');
  const name = `ebbgate_t_${suffix}`;
  const user = `ebg_t_${suffix}`;
  const password = randomBytes(12).toString('base64url');
  const conn = await adminConnection();
  try {
    await provisionDatabase(conn, name, user, password);
  } finally {
    await conn.end();
  }
  const u = new URL(adminUrl());
  const migration = migrationCredentials(user, password);
  return {
    name,
    url: `mysql://${migration.user}:${encodeURIComponent(migration.password)}@${u.hostname}:${u.port}/${name}`,
    runtimeUrl: `mysql://${user}:${password}@${u.hostname}:${u.port}/${name}`,
    drop: async () => {
      const c = await adminConnection();
      try {
        await c.query(`DROP DATABASE IF EXISTS \`${name}\``);
        await c.query(`DROP USER IF EXISTS '${user}'@'127.0.0.1', '${migration.user}'@'127.0.0.1'`);
      } finally {
        await c.end();
      }
    },
  };
}
