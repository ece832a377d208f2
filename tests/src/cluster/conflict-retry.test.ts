/**
 * transactionWithRetry (gateway/src/db/conflict-retry.ts) against a real deadlock on the test
 * MariaDB: two transactions lock two rows in opposite orders; InnoDB's deadlock detection rolls
 * one back with ER_LOCK_DEADLOCK 1213 (MariaDB Knowledge Base, "InnoDB Lock Modes"/deadlocks: the
 * victim "should be restarted"), which is also how a Galera certification failure is reported.
 * The helper must re-run the victim to completion, and must not re-run other errors.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DataSource } from 'typeorm';
import { createDataSource } from '../../../gateway/src/db/data-source';
import { isConflictRetryable, transactionWithRetry } from '../../../gateway/src/db/conflict-retry';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';

describe('transactionWithRetry', () => {
  let db: TestDatabase;
  let ds: DataSource;

  beforeAll(async () => {
    db = await createTestDatabase();
    ds = await createDataSource(db.url, 4).initialize();
    await ds.query('CREATE TABLE retry_probe (id INT PRIMARY KEY, v INT NOT NULL) ENGINE=InnoDB');
    await ds.query('INSERT INTO retry_probe VALUES (1, 0), (2, 0)');
  });

  afterAll(async () => {
    await ds?.destroy();
    await db?.drop();
  });

  it('re-runs the deadlock victim until it commits', async () => {
    let aHolds!: () => void;
    const aHasRow1 = new Promise<void>((r) => (aHolds = r));
    let bHolds!: () => void;
    const bHasRow2 = new Promise<void>((r) => (bHolds = r));
    const retries: number[] = [];
    const errors: unknown[] = [];
    let runs = 0;

    const a = transactionWithRetry(
      ds,
      async (m) => {
        runs++;
        await m.query('UPDATE retry_probe SET v = v + 1 WHERE id = 1');
        aHolds();
        await bHasRow2;
        await m.query('UPDATE retry_probe SET v = v + 1 WHERE id = 2');
      },
      { onRetry: (n, err) => (retries.push(n), errors.push(err)) },
    );
    const b = transactionWithRetry(
      ds,
      async (m) => {
        runs++;
        await m.query('UPDATE retry_probe SET v = v + 10 WHERE id = 2');
        bHolds();
        await aHasRow1;
        await m.query('UPDATE retry_probe SET v = v + 10 WHERE id = 1');
      },
      { onRetry: (n, err) => (retries.push(n), errors.push(err)) },
    );
    await Promise.all([a, b]);

    // One of the two was chosen as the victim (1213) and ran again; both increments landed once.
    expect(retries.length).toBeGreaterThanOrEqual(1);
    expect(errors.every(isConflictRetryable)).toBe(true);
    expect(runs).toBe(2 + retries.length);
    const rows = (await ds.query('SELECT id, v FROM retry_probe ORDER BY id')) as { id: number; v: number }[];
    expect(rows.map((r) => Number(r.v))).toEqual([11, 11]);
  });

  it('does not re-run a transaction that failed for another reason (duplicate key)', async () => {
    let runs = 0;
    await expect(
      transactionWithRetry(ds, async (m) => {
        runs++;
        await m.query('INSERT INTO retry_probe VALUES (1, 0)');
      }),
    ).rejects.toMatchObject({ driverError: { errno: 1062 } });
    expect(runs).toBe(1);
  });
});
