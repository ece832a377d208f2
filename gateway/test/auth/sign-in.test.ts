import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway({ auth: { lockoutThreshold: 3, sessionMinutes: 1 } });
});
afterAll(async () => gw?.stop());

describe('sign-in', () => {
  it('signs in each demo user with its roles and sets httpOnly SameSite session cookie', async () => {
    for (const role of ['admin', 'integrator', 'reviewer', 'operator'] as const) {
      const u = gw.demoUser(role);
      const res = await request(gw.server).post('/api/v1/auth/sign-in').send({ username: u.username, password: u.password });
      expect(res.status).toBe(200);
      expect(res.body.user.roles).toEqual(u.roles);
      const cookies = ([] as string[]).concat(res.headers['set-cookie']);
      const session = cookies.find((c) => c.startsWith('ebbgate_session='))!;
      expect(session).toMatch(/HttpOnly/i);
      expect(session).toMatch(/SameSite=Strict/i);
    }
  });

  it('rejects a wrong password with 401 problem details', async () => {
    const res = await request(gw.server).post('/api/v1/auth/sign-in').send({ username: 'ivo.integrator', password: 'not-the-password-1' });
    expect(res.status).toBe(401);
    expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(res.body).toMatchObject({ status: 401, title: 'Sign-in failed' });
  });

  it('locks the account after the configured number of failures, even for the right password', async () => {
    const u = gw.demoUser('operator');
    for (let i = 0; i < 3; i++) {
      await request(gw.server).post('/api/v1/auth/sign-in').send({ username: u.username, password: 'wrong-password-x1' }).expect(401);
    }
    const res = await request(gw.server).post('/api/v1/auth/sign-in').send({ username: u.username, password: u.password });
    expect(res.status).toBe(423);
    const audit = await (await gw.signIn('admin')).get('/api/v1/audit?action=user.lock');
    expect(audit.body.items.some((e: { entityType: string; after: { username: string } }) => e.after.username === u.username)).toBe(true);
  });

  it('answers the session, renews it, and refuses it after sign-out', async () => {
    const client = await gw.signIn('reviewer');
    const s = await client.get('/api/v1/auth/session').expect(200);
    expect(s.body.user.username).toBe(gw.demoUser('reviewer').username);
    const renewed = await client.post('/api/v1/auth/renew').expect(200);
    expect(new Date(renewed.body.expiresAt).getTime()).toBeGreaterThanOrEqual(new Date(s.body.expiresAt).getTime());
    await client.post('/api/v1/auth/sign-out').expect(204);
    await client.get('/api/v1/auth/session').expect(401);
  });

  it('refuses an expired session token', async () => {
    const client = await gw.signIn('integrator');
    await gw.ctx.ds.query('UPDATE user_session SET expires_at = NOW(3) - INTERVAL 1 MINUTE');
    await client.get('/api/v1/auth/session').expect(401);
  });

  it('refuses a state-changing request without the CSRF header (403)', async () => {
    const client = await gw.signIn('admin');
    const res = await request(gw.server).post('/api/v1/auth/renew').set('Cookie', client.cookies.join('; '));
    expect(res.status).toBe(403);
    expect(res.body.title).toBe('CSRF check failed');
    const forged = await request(gw.server).post('/api/v1/auth/renew').set('Cookie', client.cookies.join('; ')).set('X-CSRF-Token', 'forged');
    expect(forged.status).toBe(403);
  });
});
