import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { DEMO_MONITOR_PROFILE } from '../scenarios/monitor-models';

/** A signed-in console session (cookie + CSRF header), as api-plan.md describes. */
export async function signIn(gatewayUrl: string, username: string, password: string) {
  const res = await fetch(new URL('/api/v1/auth/sign-in', gatewayUrl), {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ username, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in of ${username} failed: ${res.status} ${await res.text()}`);
  const cookies = res.headers
    .getSetCookie()
    .map((c) => c.split(';')[0])
    .join('; ');
  const { csrfToken } = (await res.json()) as { csrfToken: string };
  return async (method: string, p: string, body?: unknown) => {
    const r = await fetch(new URL(`/api/v1${p}`, gatewayUrl), {
      method,
      headers: { cookie: cookies, 'x-csrf-token': csrfToken, ...(body !== undefined ? { 'content-type': 'application/json' } : {}) },
      body: body !== undefined ? JSON.stringify(body) : undefined,
    });
    const text = await r.text();
    return { status: r.status, body: text ? (JSON.parse(text) as unknown) : undefined };
  };
}

type Api = Awaited<ReturnType<typeof signIn>>;

/**
 * Every item of a server-paginated list (`{items, page, pageSize, total}`), read 500 at a time
 * (the largest page the gateway serves). `query` holds the filters, e.g. `search=...`.
 */
export async function listAll<T>(api: Api, p: string, query: Record<string, string> = {}): Promise<T[]> {
  const out: T[] = [];
  for (let page = 1; ; page++) {
    const qs = new URLSearchParams({ ...query, page: String(page), pageSize: '500' });
    const r = await api('GET', `${p}?${qs}`);
    if (r.status !== 200) throw new Error(`GET ${p}: ${r.status} ${JSON.stringify(r.body)}`);
    const body = r.body as { items: T[]; total: number };
    out.push(...body.items);
    if (!body.items.length || out.length >= body.total) return out;
  }
}

/** The demo integrator's credentials from config/demo/users.json. */
export async function demoIntegrator(repoRoot: string): Promise<{ username: string; password: string }> {
  const users = JSON.parse(await readFile(path.join(repoRoot, 'config/demo/users.json'), 'utf8')) as { username: string; password: string; roles: string[] }[];
  const u = users.find((x) => x.roles.includes('integrator'));
  if (!u) throw new Error('config/demo/users.json has no integrator');
  return u;
}

/** Load-test monitor identifiers: 16 hex digits (EUI-64 form), recognisable by the 0EBB prefix. */
export const loadMonitorId = (i: number) => `0EBB${i.toString(16).toUpperCase().padStart(12, '0')}`;

/**
 * Registers the demo monitor profile (once) and N monitors with fresh API keys, through the
 * gateway's own API as an integrator would; returns identifier → key.
 */
export async function provisionMonitors(
  gatewayUrl: string,
  creds: { username: string; password: string },
  identifiers: string[],
): Promise<Record<string, string>> {
  const api = await signIn(gatewayUrl, creds.username, creds.password);
  const profiles = await listAll<{ id: string; name: string }>(api, '/profiles', { search: DEMO_MONITOR_PROFILE.name });
  let profile = profiles.find((p) => p.name === DEMO_MONITOR_PROFILE.name);
  if (!profile) {
    const r = await api('POST', '/profiles', DEMO_MONITOR_PROFILE);
    if (r.status !== 201) throw new Error(`creating the profile failed: ${r.status} ${JSON.stringify(r.body)}`);
    profile = r.body as { id: string; name: string };
  }
  const keys: Record<string, string> = {};
  for (const identifier of identifiers) {
    const found = (await listAll<{ id: string; identifier: string }>(api, '/monitors', { search: identifier })).find((m) => m.identifier === identifier);
    let id = found?.id;
    if (!id) {
      const r = await api('POST', '/monitors', { identifier, profileId: profile.id, enabled: true });
      if (r.status !== 201) throw new Error(`registering ${identifier} failed: ${r.status} ${JSON.stringify(r.body)}`);
      id = (r.body as { id: string }).id;
    }
    const k = await api('POST', `/monitors/${id}/api-key`);
    if (k.status !== 201) throw new Error(`issuing a key for ${identifier} failed: ${k.status} ${JSON.stringify(k.body)}`);
    keys[identifier] = (k.body as { apiKey: string }).apiKey;
  }
  return keys;
}
