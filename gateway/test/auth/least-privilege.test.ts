/**
 * The gateway runs as a MariaDB user with data privileges only; migrations run as another user.
 * Checked against the real server (MariaDB privilege system: TRUNCATE needs DROP, DROP TRIGGER
 * needs TRIGGER, DDL needs CREATE/ALTER/DROP; MariaDB Knowledge Base, "GRANT").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDataSource } from '../../src/db/data-source';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
  await (await gw.signIn('admin')).get('/api/v1/users').expect(200); // a few audit rows exist
});
afterAll(async () => gw?.stop());

const refused = async (sql: string) => {
  const err = await gw.ctx.ds.query(sql).then(
    () => null,
    (e: { code?: string; sqlMessage?: string }) => e,
  );
  expect(err, `${sql} should be refused`).not.toBeNull();
  return err!;
};

describe('database least privilege', () => {
  it('runs the gateway as a user that holds data privileges only', async () => {
    const [{ me }] = (await gw.ctx.ds.query('SELECT CURRENT_USER() AS me')) as { me: string }[];
    expect(me).toBe(`${new URL(gw.db.runtimeUrl).username}@127.0.0.1`);
    const grants = ((await gw.ctx.ds.query('SHOW GRANTS')) as Record<string, string>[]).map((r) => Object.values(r)[0]!).join('\n');
    expect(grants).toMatch(/GRANT SELECT, INSERT, UPDATE, DELETE ON `[^`]+`\.\*/);
    expect(grants).not.toMatch(/ALL PRIVILEGES|CREATE|ALTER|DROP|TRIGGER|GRANT OPTION|SUPER/);
  });

  it('cannot truncate the audit table, drop its triggers, or change the schema', async () => {
    const before = Number(((await gw.ctx.ds.query('SELECT COUNT(*) AS n FROM audit_entry')) as { n: number }[])[0]!.n);
    expect(before).toBeGreaterThan(0);
    expect((await refused('TRUNCATE TABLE audit_entry')).code).toBe('ER_TABLEACCESS_DENIED_ERROR');
    expect((await refused('DROP TRIGGER audit_entry_no_delete')).code).toMatch(/ACCESS_DENIED/);
    expect((await refused('DROP TRIGGER audit_entry_no_update')).code).toMatch(/ACCESS_DENIED/);
    expect((await refused('DROP TABLE audit_entry')).code).toBe('ER_TABLEACCESS_DENIED_ERROR');
    expect((await refused('ALTER TABLE audit_entry ENGINE=InnoDB')).code).toBe('ER_TABLEACCESS_DENIED_ERROR');
    expect((await refused('CREATE TABLE shadow (id int)')).code).toBe('ER_TABLEACCESS_DENIED_ERROR');
    // The rows it may touch otherwise are still protected by the append-only triggers.
    expect((await refused('DELETE FROM audit_entry')).sqlMessage).toMatch(/append-only/);
    expect((await refused("UPDATE audit_entry SET action = 'forged'")).sqlMessage).toMatch(/append-only/);
    const triggers = (await gw.ctx.ds.query("SELECT trigger_name AS t FROM information_schema.triggers WHERE event_object_table = 'audit_entry'")) as {
      t: string;
    }[];
    expect(triggers.map((t) => t.t).sort()).toEqual(['audit_entry_no_delete', 'audit_entry_no_update']);
    const after = Number(((await gw.ctx.ds.query('SELECT COUNT(*) AS n FROM audit_entry')) as { n: number }[])[0]!.n);
    expect(after).toBeGreaterThanOrEqual(before);
  });

  it('migrated the schema as the separate migration user, which holds DDL on this database only', async () => {
    const mig = await createDataSource(gw.db.url, 1).initialize();
    try {
      const [{ me }] = (await mig.query('SELECT CURRENT_USER() AS me')) as { me: string }[];
      expect(me).not.toBe(`${new URL(gw.db.runtimeUrl).username}@127.0.0.1`);
      const grants = ((await mig.query('SHOW GRANTS')) as Record<string, string>[]).map((r) => Object.values(r)[0]!).join('\n');
      expect(grants).toMatch(new RegExp(`GRANT ALL PRIVILEGES ON \`${gw.db.name}\`\\.\\*`));
      expect(grants).not.toMatch(/ON \*\.\*.*(ALL|CREATE|SUPER)/);
      const applied = (await mig.query('SELECT name FROM migrations')) as { name: string }[];
      expect(applied.map((m) => m.name)).toContain('SignInThrottle1765300000000');
    } finally {
      await mig.destroy();
    }
  });
});

describe('a gateway started as a user that can change the schema', () => {
  it('warns at start, naming the broad grant (and DATABASE_MIGRATION_URL)', async () => {
    const { Writable } = await import('node:stream');
    const pino = (await import('pino')).default;
    const { loadConfig } = await import('../../src/config/load');
    const { startGateway } = await import('../../src/server');
    const warningsFor = async (url: string) => {
      const lines: string[] = [];
      const logger = pino({ level: 'warn' }, new Writable({ write: (c, _e, cb) => (lines.push(String(c)), cb()) }));
      const config = loadConfig(
        { NODE_ENV: 'test' },
        {
          database: { url, poolSize: 2 },
          gateway: { port: 0, consoleDir: '/nonexistent' },
          auth: { jwtSecret: 'y'.repeat(32) },
          log: { level: 'warn' },
          mllp: { enabled: false, port: 0 },
          workers: { enabled: false },
        },
      );
      const started = await startGateway({ config, logger, services: false });
      await started.stop();
      return lines.map((l) => JSON.parse(l) as { msg: string; grants?: string[] }).filter((l) => l.msg.includes('DATABASE_MIGRATION_URL'));
    };
    const [warning] = await warningsFor(gw.db.url);
    expect(warning).toBeDefined();
    expect(warning!.grants!.join()).toMatch(/ALL PRIVILEGES/);
    expect(warning!.grants!.join()).not.toMatch(/PASSWORD/);
    expect(await warningsFor(gw.db.runtimeUrl)).toEqual([]); // the data-only user: no warning
  });
});
