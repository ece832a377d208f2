/** Direct API calls for arranging end-to-end scenarios (what the browser then shows is the test). */
import { demoUser, type Role } from './browser';

export interface ApiSession {
  csrf: string;
  cookie: string;
  call<T>(method: string, path: string, body?: unknown): Promise<{ status: number; body: T }>;
}

export async function apiSignIn(gatewayUrl: string, role: Role): Promise<ApiSession> {
  const user = demoUser(role);
  const res = await fetch(`${gatewayUrl}/api/v1/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ username: user.username, password: user.password }),
  });
  if (res.status !== 200) throw new Error(`sign-in as ${role}: HTTP ${res.status} ${await res.text()}`);
  const session = (await res.json()) as { csrfToken: string };
  const cookie = res.headers
    .getSetCookie()
    .map((c) => c.split(';')[0])
    .join('; ');
  return {
    csrf: session.csrfToken,
    cookie,
    call: async <T>(method: string, path: string, body?: unknown) => {
      const r = await fetch(`${gatewayUrl}/api/v1${path}`, {
        method,
        headers: { cookie, 'x-csrf-token': session.csrfToken, ...(body === undefined ? {} : { 'content-type': 'application/json' }) },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      const text = await r.text();
      return { status: r.status, body: (text ? JSON.parse(text) : undefined) as T };
    },
  };
}

/** Polls `probe` until it returns a value (bounded: `tries` × `everyMs`). */
export async function eventually<T>(probe: () => Promise<T | undefined>, what: string, tries = 60, everyMs = 1000): Promise<T> {
  for (let i = 0; i < tries; i++) {
    const v = await probe();
    if (v !== undefined) return v;
    await new Promise((r) => setTimeout(r, everyMs));
  }
  throw new Error(`timed out waiting for ${what}`);
}
