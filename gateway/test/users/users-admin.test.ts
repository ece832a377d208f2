import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGatewayAs, type SignedInClient, type TestGateway } from '../support/harness';

let gw: TestGateway;
let admin: SignedInClient;
beforeAll(async () => ({ gw, client: admin } = await startTestGatewayAs('admin')));
afterAll(async () => gw?.stop());

const auditFor = async (entityId: string) =>
  (await admin.get(`/api/v1/audit?entityType=user&entityId=${entityId}&order=asc`)).body.items as {
    action: string;
    before: unknown;
    after: Record<string, unknown>;
    actorName: string;
  }[];

describe('user administration', () => {
  it('creates a user who can sign in with the given roles, audited with the actor', async () => {
    const res = await admin.post('/api/v1/users', {
      username: 'nia.nightshift',
      displayName: 'Nia (night shift)',
      password: 'Night-shift-2026',
      roles: ['operator', 'reviewer'],
    });
    expect(res.status).toBe(201);
    expect(res.body.roles).toEqual(['operator', 'reviewer']);
    const nia = await gw.signIn({ username: 'nia.nightshift', password: 'Night-shift-2026' });
    expect((await nia.get('/api/v1/auth/session')).body.user.roles).toEqual(['operator', 'reviewer']);
    const audit = await auditFor(res.body.id);
    expect(audit[0]).toMatchObject({ action: 'user.create', actorName: gw.demoUser('admin').username });
    expect(JSON.stringify(audit)).not.toContain('Night-shift-2026');
  });

  it('enforces the password policy with a field error', async () => {
    const res = await admin.post('/api/v1/users', { username: 'weak.one', displayName: 'Weak', password: 'short', roles: ['operator'] });
    expect(res.status).toBe(400);
    expect(res.body.errors).toEqual(expect.arrayContaining([expect.objectContaining({ path: 'password' })]));
  });

  it('refuses a duplicate username with 409', async () => {
    const res = await admin.post('/api/v1/users', {
      username: gw.demoUser('operator').username,
      displayName: 'Dup',
      password: 'Another-pass-99',
      roles: ['operator'],
    });
    expect(res.status).toBe(409);
  });

  it('changes roles, disables (ending sessions) and resets passwords, each audited with before/after', async () => {
    const created = await admin.post('/api/v1/users', { username: 'tom.temp', displayName: 'Tom', password: 'Temporary-pass-1', roles: ['reviewer'] });
    const id = created.body.id as string;
    const tom = await gw.signIn({ username: 'tom.temp', password: 'Temporary-pass-1' });
    await admin.patch(`/api/v1/users/${id}`, { roles: ['integrator'] }).expect(200);
    await admin.patch(`/api/v1/users/${id}`, { disabled: true }).expect(200);
    await tom.get('/api/v1/auth/session').expect(401);
    await admin.patch(`/api/v1/users/${id}`, { disabled: false }).expect(200);
    await admin.post(`/api/v1/users/${id}/password`, { password: 'Brand-new-pass-2' }).expect(204);
    await gw.signIn({ username: 'tom.temp', password: 'Brand-new-pass-2' });
    const audit = await auditFor(id);
    expect(audit.map((a) => a.action).filter((a) => a.startsWith('user.'))).toEqual([
      'user.create',
      'user.change-roles',
      'user.disable',
      'user.enable',
      'user.reset-password',
    ]);
    expect(audit.find((a) => a.action === 'user.change-roles')).toMatchObject({ before: { roles: ['reviewer'] }, after: { roles: ['integrator'] } });
  });

  it('refuses (409) to disable or demote the last active admin, and allows it once another admin exists', async () => {
    const me = (await admin.get('/api/v1/auth/session')).body.user.id as string;
    for (const patch of [{ disabled: true }, { roles: ['integrator'] }]) {
      const res = await admin.patch(`/api/v1/users/${me}`, patch);
      expect(res.status).toBe(409);
      expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
      expect(res.body.detail).toMatch(/last active admin/);
    }
    const [{ n }] = (await gw.ctx.ds.query(`SELECT COUNT(*) AS n FROM app_user WHERE disabled = 0 AND roles LIKE '%"admin"%'`)) as { n: number }[];
    expect(Number(n)).toBe(1);
    // Two admins demoting each other at once: exactly one of the two changes may succeed.
    const second = await admin.post('/api/v1/users', { username: 'sam.second', displayName: 'Sam', password: 'Second-admin-9', roles: ['admin'] });
    const sam = await gw.signIn({ username: 'sam.second', password: 'Second-admin-9' });
    const both = await Promise.all([
      admin.patch(`/api/v1/users/${second.body.id}`, { roles: ['reviewer'] }),
      sam.patch(`/api/v1/users/${me}`, { roles: ['reviewer'] }),
    ]);
    expect(both.map((r) => r.status).sort()).toEqual([200, 409]);
    const [{ m }] = (await gw.ctx.ds.query(`SELECT COUNT(*) AS m FROM app_user WHERE disabled = 0 AND roles LIKE '%"admin"%'`)) as { m: number }[];
    expect(Number(m)).toBe(1);
  });

  it('lists users with server paging', async () => {
    const page = await admin.get('/api/v1/users?page=1&pageSize=2&sort=username&order=asc');
    expect(page.body.items).toHaveLength(2);
    expect(page.body.total).toBeGreaterThanOrEqual(4);
  });
});

describe('audit log', () => {
  it('is append-only in the database itself', async () => {
    await expect(gw.ctx.ds.query('UPDATE audit_entry SET action = ? LIMIT 1', ['tampered'])).rejects.toThrow(/append-only/);
    await expect(gw.ctx.ds.query('DELETE FROM audit_entry LIMIT 1')).rejects.toThrow(/append-only/);
  });

  it('filters by action and time', async () => {
    const from = new Date(Date.now() - 60_000).toISOString();
    const res = await admin.get(`/api/v1/audit?action=user.&from=${encodeURIComponent(from)}`);
    expect(res.status).toBe(200);
    expect(res.body.items.length).toBeGreaterThan(0);
    for (const e of res.body.items) expect(e.action.startsWith('user.')).toBe(true);
  });
});
