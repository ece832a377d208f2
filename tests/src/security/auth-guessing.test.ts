/**
 * Password guessing against the real gateway process: 30 parallel wrong passwords for the
 * on-call admin are each checked and counted, or refused before any check (429) — never lost in
 * a race; the account then waits a growing, capped time instead of locking, so the admin gets in
 * again soon from another address; and the answers do not tell a real account from a made-up one.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnConfiguredGateway, type ConfiguredGateway, type GatewayProcess } from '../ingest/gateway-process';
import { queryDatabase } from '../support/database';

const ADMIN = { username: 'ada.admin', password: 'Harrowmere-admin-1' };
let started: ConfiguredGateway;
let gw: GatewayProcess;

beforeAll(async () => {
  started = await spawnConfiguredGateway(
    {
      auth: {
        signInAttemptsPerMinute: 1000,
        throttle: {
          accountFreeFailures: 5,
          sourceFreeFailures: 1000,
          baseDelaySeconds: 1,
          accountMaxDelaySeconds: 2,
          sourceMaxDelaySeconds: 900,
          forgetMinutes: 60,
        },
      },
    },
    { workers: false },
  );
  gw = started.gw;
});
afterAll(async () => started?.stop());

const signIn = (body: { username: string; password: string }, from: string) =>
  fetch(`${gw.url}/api/v1/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-forwarded-for': from },
    body: JSON.stringify(body),
  });

const query = <T>(sql: string, params: unknown[] = []) => queryDatabase<T>(started.db.url, sql, params);

describe('password guessing', () => {
  it('counts every checked guess of 30 parallel ones, then makes the account wait (capped), not lock', async () => {
    const answers = await Promise.all(
      Array.from({ length: 30 }, (_, i) => signIn({ username: ADMIN.username, password: `guess-${i}-Harrowmere` }, '203.0.113.50')),
    );
    const statuses = answers.map((a) => a.status);
    expect(statuses.every((s) => s === 401 || s === 429)).toBe(true);
    const checked = statuses.filter((s) => s === 401).length;
    expect(checked).toBeGreaterThanOrEqual(5);
    const [row] = await query<{ failures: number }>("SELECT failures FROM sign_in_throttle WHERE scope = 'account' AND subject = ?", [ADMIN.username]);
    expect(row?.failures).toBe(checked); // each checked guess counted once: none lost to a race
    const [audit] = await query<{ n: number }>("SELECT COUNT(*) AS n FROM audit_entry WHERE action = 'auth.sign-in-failed'");
    expect(Number(audit!.n)).toBe(checked);
    // Right now even the right password waits (from any address): 429 with Retry-After ≤ the cap.
    const waiting = await signIn(ADMIN, '198.51.100.7');
    expect(waiting.status).toBe(429);
    expect(Number(waiting.headers.get('retry-after'))).toBeLessThanOrEqual(2);
    // No lock: once the capped wait is over, the admin signs in from the ward's address.
    await new Promise((r) => setTimeout(r, 2_500));
    expect((await signIn(ADMIN, '198.51.100.7')).status).toBe(200);
  });

  it('answers a made-up username exactly like a wrong password for a real one', async () => {
    const real = await signIn({ username: 'rhea.reviewer', password: 'not-her-password-1' }, '203.0.113.60');
    const fake = await signIn({ username: 'rhea.reviewer.x', password: 'not-her-password-1' }, '203.0.113.61');
    expect(real.status).toBe(401);
    expect(fake.status).toBe(401);
    const strip = async (r: Response) => ({ ...((await r.json()) as object), instance: undefined });
    expect(await strip(real)).toEqual(await strip(fake));
  });
});
