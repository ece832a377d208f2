/**
 * Every list route refuses a sort key it does not know with 400 problem details (never a 500,
 * never a raw column name reaching SQL): walks every declared GET route that takes `sort`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLES, type Role } from '@ebbgate/shared';
import { PERMISSIONS, PUBLIC } from '../../src/auth/permissions';
import { ROUTES } from '../../src/http/route';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';

let gw: TestGateway;
const clients = {} as Record<Role, SignedInClient>;
beforeAll(async () => {
  gw = await startTestGateway();
  for (const role of ROLES) clients[role] = await gw.signIn(role);
});
afterAll(async () => gw?.stop());

const takesSort = (r: (typeof ROUTES)[number]) => {
  const shape = (r.query as { shape?: Record<string, unknown> } | undefined)?.shape;
  return r.method === 'get' && !!shape && 'sort' in shape && !r.path.includes(':');
};

describe('sort keys', () => {
  it('are declared on the list routes', () => {
    expect(ROUTES.filter(takesSort).length).toBeGreaterThanOrEqual(5);
  });

  it('answer 400 for an unknown key on every list route, including inherited object keys', async () => {
    for (const r of ROUTES.filter(takesSort)) {
      const role =
        r.permission === PUBLIC ? 'admin' : ROLES.find((x) => (PERMISSIONS[r.permission as keyof typeof PERMISSIONS] as readonly string[]).includes(x));
      if (!role) continue; // device-only list routes do not exist
      for (const key of ['no_such_column', 'constructor', '__proto__', 'toString', 'id; DROP TABLE app_user']) {
        const res = await clients[role].get(`/api/v1${r.path}?sort=${encodeURIComponent(key)}`);
        expect(res.status, `${r.path}?sort=${key} → ${res.status} ${res.body?.detail ?? ''}`).toBe(400);
        expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
      }
    }
  });
});
