/**
 * A real gateway on a throwaway MariaDB database, for integration tests:
 * `const gw = await startTestGateway(); const admin = await gw.signIn('admin');`
 */
import { randomBytes } from 'node:crypto';
import request from 'supertest';
import type { Role } from '@ebbgate/shared';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { deepMerge, loadConfig } from '../../src/config/load';
import type { Config } from '../../src/config/schema';
import { readDemoUsers, type DemoUser } from '../../src/seed/demo-users';
import { startGateway, type RunningGateway } from '../../src/server';

export interface TestGateway extends RunningGateway {
  db: TestDatabase;
  config: Config;
  /** Demo user holding the role (from config/demo/users.json). */
  demoUser(role: Role): DemoUser;
  /** Signs in and returns a client that sends the cookies and the CSRF header. */
  signIn(who: Role | { username: string; password: string }): Promise<SignedInClient>;
}

export interface SignedInClient {
  csrfToken: string;
  cookies: string[];
  get(path: string): request.Test;
  post(path: string, body?: object): request.Test;
  put(path: string, body?: object): request.Test;
  patch(path: string, body?: object): request.Test;
  delete(path: string): request.Test;
}

export async function startTestGateway(overrides: Record<string, unknown> = {}, opts: { services?: boolean } = {}): Promise<TestGateway> {
  const db = await createTestDatabase();
  const config = loadConfig(
    { NODE_ENV: 'test' },
    deepMerge(
      {
        // The gateway runs as the data-only user; migrations run as the migration user.
        database: { url: db.runtimeUrl, migrationUrl: db.url, poolSize: 5 },
        // Request rate limits high: suites fire many requests from one address (their own tests lower them).
        gateway: { port: 0, consoleDir: '/nonexistent', rateLimit: { perSourcePerMinute: 1_000_000, perKeyPerMinute: 1_000_000 } },
        auth: { jwtSecret: randomBytes(32).toString('hex'), signInAttemptsPerMinute: 1000 },
        log: { level: 'silent' },
        mllp: { enabled: false, port: 0 },
        workers: { enabled: false },
      },
      overrides,
    ),
  );
  const gw = await startGateway({ config, migrate: true, seedDemo: true, services: opts.services });
  const users = readDemoUsers();
  const demoUser = (role: Role) => {
    const u = users.find((x) => x.roles.includes(role));
    if (!u) throw new Error(`no demo user with role ${role}`);
    return u;
  };
  const signIn = async (who: Role | { username: string; password: string }): Promise<SignedInClient> => {
    const creds = typeof who === 'string' ? demoUser(who) : who;
    const res = await request(gw.server).post('/api/v1/auth/sign-in').send({ username: creds.username, password: creds.password });
    if (res.status !== 200) throw new Error(`sign-in of ${creds.username} failed: ${res.status} ${JSON.stringify(res.body)}`);
    const cookies = ([] as string[]).concat(res.headers['set-cookie'] ?? []).map((c) => c.split(';')[0]!);
    const csrfToken = res.body.csrfToken as string;
    const withAuth = (t: request.Test, mutate: boolean) => {
      t.set('Cookie', cookies.join('; '));
      return mutate ? t.set('X-CSRF-Token', csrfToken) : t;
    };
    return {
      csrfToken,
      cookies,
      get: (p) => withAuth(request(gw.server).get(p), false),
      post: (p, body) => withAuth(request(gw.server).post(p), true).send(body ?? {}),
      put: (p, body) => withAuth(request(gw.server).put(p), true).send(body ?? {}),
      patch: (p, body) => withAuth(request(gw.server).patch(p), true).send(body ?? {}),
      delete: (p) => withAuth(request(gw.server).delete(p), true),
    };
  };
  return {
    ...gw,
    db,
    config,
    demoUser,
    signIn,
    stop: async () => {
      await gw.stop();
      await db.drop();
    },
  };
}

/** A test gateway with one demo user signed in, for a suite's `beforeAll`; the gateway is stopped again if the sign-in fails. */
export async function startTestGatewayAs(
  role: Role,
  overrides: Record<string, unknown> = {},
  opts: { services?: boolean } = {},
): Promise<{ gw: TestGateway; client: SignedInClient }> {
  const gw = await startTestGateway(overrides, opts);
  try {
    return { gw, client: await gw.signIn(role) };
  } catch (err) {
    await gw.stop();
    throw err;
  }
}
