import { randomUUID } from 'node:crypto';
import type { Session } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { recordAudit } from '../audit/audit.service';
import { HttpProblem } from '../http/problem';
import { UserRow, UserSessionRow } from '../users/user.entity';
import { dummyHash, hashPassword, needsRehash, verifyPassword } from './passwords';
import type { Principal } from './principal';
import { accountSubject, blockedUntil, clearAccount, countFailure } from './sign-in-throttle';
import { csrfTokenFor, signSession, verifySession } from './tokens';

export interface IssuedSession {
  token: string;
  session: Session;
}

/** Where a sign-in came from, for throttling and the audit log. */
export interface SignInSource {
  ip: string;
  requestId?: string;
}

/** One answer for every failed sign-in: unknown user, wrong password, disabled account. */
const invalidCredentials = () => new HttpProblem(401, 'Sign-in failed', 'Unknown username or wrong password, or the account cannot sign in.');

function issue(ctx: AppContext, user: UserRow, sessionId: string, expiresAt: Date): IssuedSession {
  const { jwtSecret } = ctx.config.auth;
  const minutes = Math.max(1, Math.ceil((expiresAt.getTime() - Date.now()) / 60_000));
  return {
    token: signSession({ sub: user.id, sid: sessionId }, jwtSecret, minutes),
    session: {
      user: { id: user.id, username: user.username, displayName: user.displayName, roles: user.roles },
      csrfToken: csrfTokenFor(sessionId, jwtSecret),
      expiresAt: expiresAt.toISOString(),
    },
  };
}

/** The end of a session renewed now: the idle period, never past the absolute lifetime. */
function nextExpiry(ctx: AppContext, createdAt: Date, now = new Date()): Date {
  const { sessionMinutes, sessionAbsoluteMinutes } = ctx.config.auth;
  return new Date(Math.min(now.getTime() + sessionMinutes * 60_000, createdAt.getTime() + sessionAbsoluteMinutes * 60_000));
}

/**
 * Checks the password and opens a session. Every failure (unknown user, wrong password, disabled
 * account) costs one password verification and one counted failure, and answers the same 401;
 * a throttled account or source answers 429 with Retry-After, whether or not the user exists.
 */
export async function signIn(ctx: AppContext, username: string, password: string, source: SignInSource): Promise<IssuedSession> {
  const { requestId } = source;
  const until = await blockedUntil(ctx.ds, username, source.ip);
  if (until) {
    const wait = Math.max(1, Math.ceil((until.getTime() - Date.now()) / 1000));
    await recordAudit(ctx.ds.manager, {
      principal: undefined,
      action: 'auth.sign-in-throttled',
      entityType: 'user',
      entityId: null,
      after: { username, source: source.ip },
      requestId,
    });
    throw new HttpProblem(429, 'Too many sign-in attempts', `Too many failed sign-ins for this account or from this address; try again in ${wait} s.`, {
      headers: { 'Retry-After': String(wait) },
    });
  }
  const user = await ctx.ds.getRepository(UserRow).findOneBy({ username });
  const ok = await verifyPassword(password, user?.passwordHash ?? (await dummyHash()));
  if (!user || !ok || user.disabled) {
    await countFailure(ctx.ds, ctx.config.auth.throttle, username, source.ip);
    // The console shows the account's wait as `lockedUntil`; the count itself is atomic here too.
    // Run for unknown names as well (it then changes no row), so every failure costs the same queries.
    await ctx.ds.query(
      `UPDATE app_user SET failed_attempts = failed_attempts + 1, locked_until = (SELECT blocked_until FROM sign_in_throttle WHERE scope = 'account' AND subject = ?) WHERE username = ?`,
      [accountSubject(username), username],
    );
    const reason = !user ? 'unknown-user' : !ok ? 'wrong-password' : 'disabled';
    await recordAudit(ctx.ds.manager, {
      principal: undefined,
      action: 'auth.sign-in-failed',
      entityType: 'user',
      entityId: user?.id ?? null,
      after: { username, reason, source: source.ip },
      requestId,
    });
    throw invalidCredentials();
  }
  const now = new Date();
  const sessionId = randomUUID();
  const expiresAt = nextExpiry(ctx, now, now);
  const rehash = needsRehash(user.passwordHash) ? await hashPassword(password) : null;
  const principal: Principal = { kind: 'user', userId: user.id, username: user.username, displayName: user.displayName, roles: user.roles, sessionId };
  await ctx.ds.transaction(async (m) => {
    await m.update(UserRow, user.id, { failedAttempts: 0, lockedUntil: null, lastSignInAt: now, ...(rehash ? { passwordHash: rehash } : {}) });
    await m.insert(UserSessionRow, { id: sessionId, userId: user.id, createdAt: now, expiresAt, revokedAt: null });
    await recordAudit(m, {
      principal,
      action: 'auth.sign-in',
      entityType: 'user',
      entityId: user.id,
      after: { username: user.username, source: source.ip, sessionId, ...(rehash ? { passwordRehashed: true } : {}) },
      requestId,
    });
  });
  await clearAccount(ctx.ds, username);
  return issue(ctx, user, sessionId, expiresAt);
}

/** Resolves a session cookie to a principal, checking the session row and the user each time. */
export async function principalFromSession(ctx: AppContext, token: string): Promise<Principal | null> {
  const claims = verifySession(token, ctx.config.auth.jwtSecret);
  if (!claims) return null;
  const row = await ctx.ds
    .getRepository(UserSessionRow)
    .createQueryBuilder('s')
    .innerJoin(UserRow, 'u', 'u.id = s.user_id')
    .select([
      's.id AS sid',
      's.created_at AS createdAt',
      's.expires_at AS expiresAt',
      's.revoked_at AS revokedAt',
      'u.id AS userId',
      'u.username AS username',
      'u.display_name AS displayName',
      'u.roles AS roles',
      'u.disabled AS disabled',
    ])
    .where('s.id = :sid AND s.user_id = :uid', { sid: claims.sid, uid: claims.sub })
    .getRawOne<{
      sid: string;
      createdAt: Date;
      expiresAt: Date;
      revokedAt: Date | null;
      userId: string;
      username: string;
      displayName: string;
      roles: string;
      disabled: number;
    }>();
  if (!row || row.revokedAt || Number(row.disabled)) return null;
  const now = Date.now();
  const absoluteEnd = new Date(row.createdAt).getTime() + ctx.config.auth.sessionAbsoluteMinutes * 60_000;
  if (new Date(row.expiresAt).getTime() <= now || absoluteEnd <= now) return null;
  return { kind: 'user', userId: row.userId, username: row.username, displayName: row.displayName, roles: JSON.parse(row.roles), sessionId: row.sid };
}

/** Extends the session by the idle period, never past its absolute lifetime. */
export async function renewSession(ctx: AppContext, principal: Extract<Principal, { kind: 'user' }>): Promise<IssuedSession> {
  const sessions = ctx.ds.getRepository(UserSessionRow);
  const s = await sessions.findOneByOrFail({ id: principal.sessionId });
  const expiresAt = nextExpiry(ctx, s.createdAt);
  await sessions.update(principal.sessionId, { expiresAt });
  const user = await ctx.ds.getRepository(UserRow).findOneByOrFail({ id: principal.userId });
  return issue(ctx, user, principal.sessionId, expiresAt);
}

export async function currentSession(ctx: AppContext, principal: Extract<Principal, { kind: 'user' }>): Promise<Session> {
  const s = await ctx.ds.getRepository(UserSessionRow).findOneByOrFail({ id: principal.sessionId });
  const user = await ctx.ds.getRepository(UserRow).findOneByOrFail({ id: principal.userId });
  return issue(ctx, user, s.id, s.expiresAt).session;
}

export async function signOut(ctx: AppContext, principal: Extract<Principal, { kind: 'user' }>, requestId?: string): Promise<void> {
  await ctx.ds.transaction(async (m) => {
    await m.update(UserSessionRow, principal.sessionId, { revokedAt: new Date() });
    await recordAudit(m, {
      principal,
      action: 'auth.sign-out',
      entityType: 'user',
      entityId: principal.userId,
      after: { username: principal.username, sessionId: principal.sessionId },
      requestId,
    });
  });
}
