/**
 * Walks the whole permission table: every declared route × every role, a device key, and no
 * session. Not allowed → 403; no session → 401; allowed → anything but 401/403.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLES, type Role } from '@ebbgate/shared';
import { issueDeviceKey } from '../../src/auth/device-keys';
import { PERMISSIONS, PUBLIC } from '../../src/auth/permissions';
import { ROUTES, type RouteSpec } from '../../src/http/route';
import { insertMonitor } from '../support/devices';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';

let gw: TestGateway;
const clients = {} as Record<Role, SignedInClient>;
let deviceKey = '';

beforeAll(async () => {
  gw = await startTestGateway();
  for (const role of ROLES) clients[role] = await gw.signIn(role);
  const monitor = await insertMonitor(gw.ctx.ds);
  deviceKey = (await issueDeviceKey(gw.ctx, monitor.id, undefined)).apiKey;
});
afterAll(async () => gw?.stop());

/** Routes that end the caller's own session are walked last-resort: skip them for allowed roles. */
const SELF_ENDING = new Set(['post /auth/sign-out']);
const url = (r: RouteSpec) => `/api/v1${r.path.replace(/:([A-Za-z0-9_]+)/g, 'no-such-$1')}`;
const guarded = () => ROUTES.filter((r) => r.permission !== PUBLIC);

function send(client: SignedInClient, r: RouteSpec) {
  const u = url(r);
  return r.method === 'get' ? client.get(u) : r.method === 'delete' ? client.delete(u) : client[r.method](u, {});
}

describe('permission table', () => {
  it('covers a meaningful set of routes', () => {
    expect(guarded().length).toBeGreaterThanOrEqual(8);
    for (const r of guarded()) expect(Object.keys(PERMISSIONS)).toContain(r.permission);
  });

  it('answers 401 to every guarded route without a session', async () => {
    for (const r of guarded()) {
      const res = await request(gw.server)[r.method](url(r)).send({});
      expect(res.status, `${r.method} ${r.path}`).toBe(401);
    }
  });

  it('lets each role through exactly the routes the table grants, 403 for the rest', async () => {
    for (const role of ROLES) {
      for (const r of guarded()) {
        const allowed = (PERMISSIONS[r.permission as keyof typeof PERMISSIONS] as readonly string[]).includes(role);
        if (allowed && SELF_ENDING.has(`${r.method} ${r.path}`)) continue;
        const res = await send(clients[role], r);
        const label = `${role} ${r.method} ${r.path} → ${res.status} ${res.body?.detail ?? ''}`;
        if (allowed) expect([401, 403], label).not.toContain(res.status);
        else expect(res.status, label).toBe(403);
      }
    }
  });

  it('lets a device key reach only device routes', async () => {
    for (const r of guarded()) {
      const allowed = (PERMISSIONS[r.permission as keyof typeof PERMISSIONS] as readonly string[]).includes('device');
      const res = await request(gw.server)[r.method](url(r)).set('Authorization', `Bearer ${deviceKey}`).send({});
      const label = `device ${r.method} ${r.path} → ${res.status}`;
      if (allowed) expect([401, 403], label).not.toContain(res.status);
      else expect(res.status, label).toBe(403);
    }
  });
});
