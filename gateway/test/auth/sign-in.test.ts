import { randomBytes, scryptSync } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway({
    auth: {
      sessionMinutes: 1,
      sessionAbsoluteMinutes: 30,
      throttle: {
        accountFreeFailures: 3,
        sourceFreeFailures: 1000,
        baseDelaySeconds: 1,
        accountMaxDelaySeconds: 4,
        sourceMaxDelaySeconds: 900,
        forgetMinutes: 60,
      },
    },
  });
});
afterAll(async () => gw?.stop());

const signInFrom = (source: string, username: string, password: string) =>
  request(gw.server).post('/api/v1/auth/sign-in').set('X-Forwarded-For', source).send({ username, password });
const throttleRow = async (scope: 'account' | 'source', subject: string) =>
  (
    (await gw.ctx.ds.query(
      'SELECT failures, blocked_until AS blockedUntil, last_failure_at AS lastFailureAt FROM sign_in_throttle WHERE scope = ? AND subject = ?',
      [scope, subject],
    )) as { failures: number; blockedUntil: Date | null; lastFailureAt: Date }[]
  )[0];
const unblock = () => gw.ctx.ds.query('UPDATE sign_in_throttle SET blocked_until = NULL');
const auditActions = async (action: string) =>
  (await (await gw.signIn('admin')).get(`/api/v1/audit?action=${action}&pageSize=200`)).body.items as {
    action: string;
    entityId: string | null;
    actorName: string | null;
    after: Record<string, unknown>;
  }[];

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
    const res = await signInFrom('10.9.0.1', 'ivo.integrator', 'not-the-password-1');
    expect(res.status).toBe(401);
    expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(res.body).toMatchObject({ status: 401, title: 'Sign-in failed' });
    await unblock();
  });

  it('counts 30 parallel wrong passwords as 30 failures (atomic in SQL)', async () => {
    // Free failures above 30 so no guess is refused before it is checked: each one must be counted.
    const gw3 = await startTestGateway({
      auth: {
        throttle: {
          accountFreeFailures: 50,
          sourceFreeFailures: 1000,
          baseDelaySeconds: 1,
          accountMaxDelaySeconds: 60,
          sourceMaxDelaySeconds: 900,
          forgetMinutes: 60,
        },
      },
    });
    try {
      const u = gw3.demoUser('reviewer').username;
      const answers = await Promise.all(
        Array.from({ length: 30 }, (_, i) =>
          request(gw3.server)
            .post('/api/v1/auth/sign-in')
            .set('X-Forwarded-For', `10.30.0.${i + 1}`)
            .send({ username: u, password: `wrong-guess-${i}` }),
        ),
      );
      expect(answers.map((a) => a.status)).toEqual(Array(30).fill(401));
      const [row] = (await gw3.ctx.ds.query("SELECT failures FROM sign_in_throttle WHERE scope = 'account' AND subject = ?", [u])) as { failures: number }[];
      expect(row?.failures).toBe(30);
      const [user] = (await gw3.ctx.ds.query('SELECT failed_attempts AS n FROM app_user WHERE username = ?', [u])) as { n: number }[];
      expect(Number(user!.n)).toBe(30);
      const [audit] = (await gw3.ctx.ds.query("SELECT COUNT(*) AS n FROM audit_entry WHERE action = 'auth.sign-in-failed'")) as { n: number }[];
      expect(Number(audit!.n)).toBe(30);
    } finally {
      await gw3.stop();
    }
  });

  it('answers unknown user, wrong password and disabled account alike, each after a password check', async () => {
    const admin = await gw.signIn('admin');
    const made = await admin.post('/api/v1/users', { username: 'dis.abled', displayName: 'Disabled', password: 'Disabled-pass-77', roles: ['operator'] });
    await admin.patch(`/api/v1/users/${made.body.id}`, { disabled: true }).expect(200);
    const cases = [
      ['nobody.here', 'Whatever-pass-1'],
      ['rhea.reviewer', 'Wrong-pass-for-rhea'],
      ['dis.abled', 'Disabled-pass-77'], // the right password of a disabled account
    ] as const;
    const timings: number[][] = cases.map(() => []);
    const bodies: unknown[] = [];
    for (let round = 0; round < 5; round++) {
      for (const [i, [u, p]] of cases.entries()) {
        const t0 = process.hrtime.bigint();
        const res = await signInFrom(`10.40.${round}.${i}`, u, p);
        timings[i]!.push(Number(process.hrtime.bigint() - t0) / 1e6);
        expect(res.status).toBe(401);
        bodies.push({ ...res.body, instance: undefined });
      }
      await unblock();
    }
    for (const b of bodies) expect(b).toEqual(bodies[0]);
    // Each path verifies one argon2id hash (tens of ms); an unknown name must not answer in a fraction of that.
    const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;
    const medians = timings.map(median);
    expect(Math.min(...medians)).toBeGreaterThan(Math.max(...medians) / 3);
  });

  it('throttles an account with a growing wait instead of a lock, for unknown usernames too', async () => {
    for (const username of ['otto.operator', 'no.such.user']) {
      for (let i = 0; i < 3; i++) expect((await signInFrom('10.50.0.1', username, 'wrong-password-x1')).status).toBe(401);
      expect(await throttleRow('account', username)).toMatchObject({ failures: 3, blockedUntil: null });
      const waits: number[] = [];
      for (let i = 0; i < 4; i++) {
        expect((await signInFrom('10.50.0.2', username, 'wrong-password-x1')).status).toBe(401);
        const row = (await throttleRow('account', username))!;
        expect(row.blockedUntil).not.toBeNull();
        waits.push(Math.round((new Date(row.blockedUntil!).getTime() - new Date(row.lastFailureAt).getTime()) / 1000));
        const refused = await signInFrom('10.50.0.3', username, 'wrong-password-x1');
        expect(refused.status).toBe(429);
        expect(Number(refused.headers['retry-after'])).toBeGreaterThanOrEqual(1);
        await unblock();
      }
      // base 1 s doubling, capped at accountMaxDelaySeconds = 4
      expect(waits).toEqual([1, 2, 4, 4]);
    }
    // While the wait runs even the right password waits; after it, it signs in and the count clears.
    expect((await signInFrom('10.50.0.4', 'otto.operator', 'wrong-password-x1')).status).toBe(401);
    expect((await signInFrom('10.50.0.4', 'otto.operator', gw.demoUser('operator').password)).status).toBe(429);
    await unblock();
    expect((await signInFrom('10.50.0.4', 'otto.operator', gw.demoUser('operator').password)).status).toBe(200);
    expect(await throttleRow('account', 'otto.operator')).toBeUndefined();
  });

  it('throttles a source that guesses across many accounts', async () => {
    const gw2 = await startTestGateway({
      auth: {
        throttle: {
          accountFreeFailures: 100,
          sourceFreeFailures: 4,
          baseDelaySeconds: 1,
          accountMaxDelaySeconds: 60,
          sourceMaxDelaySeconds: 900,
          forgetMinutes: 60,
        },
      },
    });
    try {
      const from = (source: string, username: string) =>
        request(gw2.server).post('/api/v1/auth/sign-in').set('X-Forwarded-For', source).send({ username, password: 'Spray-pass-2026' });
      for (let i = 0; i < 5; i++) expect((await from('10.60.0.9', `spray.${i}`)).status).toBe(401);
      expect((await from('10.60.0.9', 'spray.new')).status).toBe(429);
      const admin = gw2.demoUser('admin');
      expect((await request(gw2.server).post('/api/v1/auth/sign-in').set('X-Forwarded-For', '10.60.0.10').send(admin)).status).toBe(200);
    } finally {
      await gw2.stop();
    }
  });

  it('stores argon2id hashes at least as strong as the OWASP Password Storage Cheat Sheet, rehashing older ones on sign-in', async () => {
    // OWASP Password Storage Cheat Sheet: argon2id, minimum m = 19 MiB (19456 KiB), t = 2, p = 1.
    const owasp = (hash: string) => {
      const m = /^\$argon2id\$v=19\$m=(\d+),t=(\d+),p=(\d+)\$/.exec(hash);
      expect(m, hash).not.toBeNull();
      expect(Number(m![1])).toBeGreaterThanOrEqual(19456);
      expect(Number(m![2])).toBeGreaterThanOrEqual(2);
    };
    const hashOf = async (u: string) => ((await gw.ctx.ds.query('SELECT password_hash AS h FROM app_user WHERE username = ?', [u])) as { h: string }[])[0]!.h;
    owasp(await hashOf('ivo.integrator'));
    // An older scrypt hash (RFC 7914, N = 2^14: below the sheet's 2^17), made here by node:crypto.
    const u = gw.demoUser('integrator');
    const salt = randomBytes(16);
    const legacy = ['scrypt', 16384, 8, 1, salt.toString('base64url'), scryptSync(u.password, salt, 32, { N: 16384, r: 8, p: 1 }).toString('base64url')].join(
      '$',
    );
    await gw.ctx.ds.query('UPDATE app_user SET password_hash = ? WHERE username = ?', [legacy, u.username]);
    expect((await signInFrom('10.70.0.1', u.username, u.password)).status).toBe(200);
    const rehashed = await hashOf(u.username);
    expect(rehashed).not.toBe(legacy);
    owasp(rehashed);
    expect((await signInFrom('10.70.0.1', u.username, u.password)).status).toBe(200);
    expect((await auditActions('auth.sign-in')).some((e) => e.after.passwordRehashed === true)).toBe(true);
  });

  it('audits sign-ins, failures and sign-outs with the source and request id', async () => {
    const res = await signInFrom('10.80.0.1', 'rhea.reviewer', 'Wrong-pass-for-audit').set('X-Request-Id', 'audit-check-1');
    expect(res.status).toBe(401);
    await unblock();
    const client = await gw.signIn('reviewer');
    await client.post('/api/v1/auth/sign-out').expect(204);
    const admin = await gw.signIn('admin');
    const items = (await admin.get('/api/v1/audit?action=auth.&pageSize=200')).body.items as {
      action: string;
      requestId: string | null;
      actorName: string | null;
      after: Record<string, unknown>;
    }[];
    const failed = items.find((e) => e.action === 'auth.sign-in-failed' && e.requestId === 'audit-check-1');
    expect(failed).toBeDefined();
    expect(failed!.after).toMatchObject({ username: 'rhea.reviewer', reason: 'wrong-password', source: '10.80.0.1' });
    expect(JSON.stringify(items)).not.toContain('Wrong-pass-for-audit');
    expect(items.some((e) => e.action === 'auth.sign-in' && e.actorName === 'rhea.reviewer')).toBe(true);
    expect(items.some((e) => e.action === 'auth.sign-out' && e.actorName === 'rhea.reviewer')).toBe(true);
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

  it('ends a session at its absolute lifetime however often it is renewed', async () => {
    const client = await gw.signIn('operator');
    const [{ id }] = (await gw.ctx.ds.query('SELECT id FROM user_session ORDER BY created_at DESC LIMIT 1')) as { id: string }[];
    // Signed in 29.5 minutes ago (absolute lifetime 30): renewing gives at most the 30 s left, not another idle minute.
    await gw.ctx.ds.query('UPDATE user_session SET created_at = NOW(3) - INTERVAL 1770 SECOND WHERE id = ?', [id]);
    const renewed = await client.post('/api/v1/auth/renew').expect(200);
    const left = new Date(renewed.body.expiresAt).getTime() - Date.now();
    expect(left).toBeLessThanOrEqual(31_000);
    expect(left).toBeGreaterThan(0);
    await gw.ctx.ds.query('UPDATE user_session SET created_at = NOW(3) - INTERVAL 31 MINUTE, expires_at = NOW(3) + INTERVAL 1 MINUTE WHERE id = ?', [id]);
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
