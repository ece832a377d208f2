/** Reading a test's own database directly, as its migration user, for checks the API does not show. */
import mariadb from 'mariadb';

/** Runs one statement on the database at `url` over a connection of its own (closed after), BIGINT as numbers. */
export async function queryDatabase<T>(url: string, sql: string, params: unknown[] = []): Promise<T[]> {
  const u = new URL(url);
  const conn = await mariadb.createConnection({
    host: u.hostname,
    port: Number(u.port),
    user: decodeURIComponent(u.username),
    password: decodeURIComponent(u.password),
    database: u.pathname.slice(1),
    bigIntAsNumber: true,
  });
  try {
    return (await conn.query(sql, params)) as T[];
  } finally {
    await conn.end();
  }
}
