import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemoUsers } from '../../src/seed/demo-users';
import { demoMonitorIdentifier } from '../../src/seed/demo-devices';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

describe('demo data of an older demo database', () => {
  it('take the invented profile names, the locally administered monitor ids and the users’ invented surnames; other rows stay', async () => {
    const q = (sql: string, p: unknown[] = []) => gw.ctx.ds.query(sql, p) as Promise<Record<string, unknown>[]>;
    const pid = randomUUID();
    await q(
      `INSERT INTO monitor_profile (id, name, manufacturer, model, transports, channels, created_at, updated_at) VALUES (?, 'Ebbgate demo: Larkspur BM-40 bedside monitor', 'x', 'Larkspur BM-40', '[]', '[]', NOW(3), NOW(3))`,
      [pid],
    );
    await q(
      `INSERT INTO monitor (id, identifier, enabled, created_at, updated_at) VALUES (?, '00A0B1FFFE000003', 1, NOW(3), NOW(3)), (?, '00A0B1FFFE2C3D4E', 1, NOW(3), NOW(3))`,
      [randomUUID(), randomUUID()],
    );
    await q(`UPDATE app_user SET display_name = 'Ada Okafor (admin)' WHERE username = 'ada.admin'`);
    await seedDemoUsers(gw.ctx.ds);
    const [profile] = await q('SELECT name, model FROM monitor_profile WHERE id = ?', [pid]);
    expect(profile).toEqual({ name: 'Ebbgate demo: Larkspur Tidereader bedside monitor', model: 'Tidereader (invented)' });
    const ids = (await q("SELECT identifier FROM monitor WHERE identifier LIKE '02EB6A%' OR identifier LIKE '00A0B1%' ORDER BY identifier")).map(
      (r) => r.identifier,
    );
    // 02-EB-6A: first octet 0x02, the U/L bit set (IEEE Std 802-2014 §8.2); a non-demo id is left alone.
    expect(ids).toEqual(['00A0B1FFFE2C3D4E', demoMonitorIdentifier(3)]);
    expect(demoMonitorIdentifier(3)).toBe('02EB6AFFFE000003');
    const [ada] = await q("SELECT display_name FROM app_user WHERE username = 'ada.admin'");
    expect(ada!.display_name).toBe('Ada Fenmarrow (admin)');
  });
});
