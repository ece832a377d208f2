/**
 * The schema and SQL are fit for a Galera cluster, checked against the limitations MariaDB
 * documents for Galera ("MariaDB Galera Cluster - Known Limitations", MariaDB Knowledge Base):
 * only InnoDB tables are replicated; every table needs a primary key (rows without one may be
 * applied in a different order on each node, and DELETE is unsupported for them); LOCK TABLES and
 * GET_LOCK() are not supported (they lock one node only). Runs on the plain test MariaDB with
 * every migration applied; no Galera needed.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DataSource } from 'typeorm';
import { repoRoot } from '../../../gateway/src/config/load';
import { createDataSource, migrate } from '../../../gateway/src/db/data-source';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';

/** Statements Galera does not replicate or does not support across nodes (the table option in upper case, as SQL is written here). */
const UNREPLICATED = [/\bGET_LOCK\s*\(|\bRELEASE_LOCK\s*\(|\bLOCK\s+TABLES?\b|\bCREATE\s+TEMPORARY\s+TABLE\b/i, /\bENGINE\s*=\s*(?!InnoDB\b)\w+/];
const UNREPLICATED_SQL = { test: (line: string) => UNREPLICATED.some((r) => r.test(line)) };

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir)) {
    const p = path.join(dir, e);
    if (statSync(p).isDirectory()) out.push(...sourceFiles(p));
    else if (p.endsWith('.ts') && !p.endsWith('.test.ts')) out.push(p);
  }
  return out;
}

describe('Galera fitness of the schema', () => {
  let db: TestDatabase;
  let ds: DataSource;

  beforeAll(async () => {
    db = await createTestDatabase();
    ds = await createDataSource(db.url, 2).initialize();
    await migrate(ds);
  });

  afterAll(async () => {
    await ds?.destroy();
    await db?.drop();
  });

  it('every table created by the migrations is InnoDB and has a primary key', async () => {
    const tables = (await ds.query(
      `SELECT t.TABLE_NAME AS name, t.ENGINE AS engine,
              (SELECT COUNT(*) FROM information_schema.TABLE_CONSTRAINTS c
                WHERE c.TABLE_SCHEMA = t.TABLE_SCHEMA AND c.TABLE_NAME = t.TABLE_NAME AND c.CONSTRAINT_TYPE = 'PRIMARY KEY') AS pk
         FROM information_schema.TABLES t
        WHERE t.TABLE_SCHEMA = ? AND t.TABLE_TYPE = 'BASE TABLE'`,
      [db.name],
    )) as { name: string; engine: string; pk: number | string }[];
    // The migrations table and the domain tables are all there (a schema that failed to migrate would pass vacuously).
    expect(tables.length).toBeGreaterThanOrEqual(10);
    expect(tables.map((t) => t.name)).toEqual(expect.arrayContaining(['migrations', 'inbound_message', 'analysis_window', 'delivery']));
    expect(tables.filter((t) => Number(t.pk) !== 1).map((t) => t.name)).toEqual([]);
    expect(tables.filter((t) => t.engine !== 'InnoDB').map((t) => `${t.name} (${t.engine})`)).toEqual([]);
  });

  it('no gateway source uses a statement Galera does not replicate (LOCK TABLES, GET_LOCK, non-InnoDB, temporary tables)', () => {
    // Negative control: the pattern finds each kind it is meant to find.
    for (const bad of ["SELECT GET_LOCK('x', 1)", 'LOCK TABLES delivery WRITE', ') ENGINE=MyISAM', ') ENGINE = Aria', 'CREATE TEMPORARY TABLE t (id INT)'])
      expect(UNREPLICATED_SQL.test(bad), bad).toBe(true);
    expect(UNREPLICATED_SQL.test(') ENGINE=InnoDB')).toBe(false);
    const files = sourceFiles(path.join(repoRoot, 'gateway/src'));
    expect(files.length).toBeGreaterThan(50);
    const hits = files.flatMap((f) =>
      readFileSync(f, 'utf8')
        .split('\n')
        .map((line, i) => ({ line, at: `${path.relative(repoRoot, f)}:${i + 1}` }))
        .filter(({ line }) => !/^\s*(\*|\/\/)/.test(line) && UNREPLICATED_SQL.test(line))
        .map(({ at, line }) => `${at}: ${line.trim()}`),
    );
    expect(hits).toEqual([]);
  });
});
