import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import type { Session } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { recordAudit } from '../audit/audit.service';
import { HttpProblem } from '../http/problem';
import { UserRow, UserSessionRow } from '../users/user.entity';
import { DUMMY_HASH, verifyPassword } from './passwords';
import type { Principal } from './principal';
import { csrfTokenFor, signSession, verifySession } from './tokens';

export interface IssuedSession {
  token: string;
  session: Session;
}

const invalidCredentials = () => new HttpProblem(401, 'Sign-in failed', 'Unknown username or wrong password.');

function issue(ctx: AppContext, user: UserRow, sessionId: string, expiresAt: Date): IssuedSession {
  const { jwtSecret, sessionMinutes } = ctx.config.auth;
  return {
    token: signSession({ sub: user.id, sid: sessionId }, jwtSecret, sessionMinutes),
    session: {
      user: { id: user.id, username: user.username, displayName: user.displayName, roles: user.roles },
      csrfToken: csrfTokenFor(sessionId, jwtSecret),
      expiresAt: expiresAt.toISOString(),
    },
  };
}

/** Checks the password, counts failures, locks after the threshold, opens a session. */
export async function signIn(ctx: AppContext, username: string, password: string, requestId?: string): Promise<IssuedSession> {
  const { lockoutThreshold, lockoutMinutes, sessionMinutes } = ctx.config.auth;
  const users = ctx.ds.getRepository(UserRow);
  const user = await users.findOneBy({ username });
  if (!user) {
    await verifyPassword(password, DUMMY_HASH);
    throw invalidCredentials();
  }
  const now = new Date();
  if (user.lockedUntil && user.lockedUntil > now) {
    throw new HttpProblem(423, 'Account locked', `Too many failed sign-ins; try again after ${user.lockedUntil.toISOString()} or ask an admin.`);
  }
  const ok = await verifyPassword(password, user.passwordHash);
  if (!ok) {
    const failed = user.failedAttempts + 1;
    const lock = failed >= lockoutThreshold;
    await users.update(user.id, { failedAttempts: lock ? 0 : failed, lockedUntil: lock ? new Date(now.getTime() + lockoutMinutes * 60_000) : null });
    if (lock) {
      await recordAudit(ctx.ds.manager, { principal: undefined, action: 'user.lock', entityType: 'user', entityId: user.id, after: { username, reason: `${failed} failed sign-ins` }, requestId });
    }
    throw invalidCredentials();
  }
  if (user.disabled) throw new HttpProblem(403, 'Account disabled', 'This account is disabled; ask an admin.');
  const sessionId = randomUUID();
  const expiresAt = new Date(now.getTime() + sessionMinutes * 60_000);
  await ctx.ds.transaction(async (m) => {
    await m.update(UserRow, user.id, { failedAttempts: 0, lockedUntil: null, lastSignInAt: now });
    await m.insert(UserSessionRow, { id: sessionId, userId: user.id, createdAt: now, expiresAt, revokedAt: null });
  });
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
    .select(['s.id AS sid', 's.expires_at AS expiresAt', 's.revoked_at AS revokedAt', 'u.id AS userId', 'u.username AS username', 'u.display_name AS displayName', 'u.roles AS roles', 'u.disabled AS disabled'])
    .where('s.id = :sid AND s.user_id = :uid', { sid: claims.sid, uid: claims.sub })
    .getRawOne<{ sid: string; expiresAt: Date; revokedAt: Date | null; userId: string; username: string; displayName: string; roles: string; disabled: number }>();
  if (!row || row.revokedAt || new Date(row.expiresAt) <= new Date() || Number(row.disabled)) return null;
  return { kind: 'user', userId: row.userId, username: row.username, displayName: row.displayName, roles: JSON.parse(row.roles), sessionId: row.sid };
}

export async function renewSession(ctx: AppContext, principal: Extract<Principal, { kind: 'user' }>): Promise<IssuedSession> {
  const expiresAt = new Date(Date.now() + ctx.config.auth.sessionMinutes * 60_000);
  await ctx.ds.getRepository(UserSessionRow).update(principal.sessionId, { expiresAt });
  const user = await ctx.ds.getRepository(UserRow).findOneByOrFail({ id: principal.userId });
  return issue(ctx, user, principal.sessionId, expiresAt);
}

export async function currentSession(ctx: AppContext, principal: Extract<Principal, { kind: 'user' }>): Promise<Session> {
  const s = await ctx.ds.getRepository(UserSessionRow).findOneByOrFail({ id: principal.sessionId });
  const user = await ctx.ds.getRepository(UserRow).findOneByOrFail({ id: principal.userId });
  return issue(ctx, user, s.id, s.expiresAt).session;
}

export async function signOut(ds: DataSource, sessionId: string): Promise<void> {
  await ds.getRepository(UserSessionRow).update(sessionId, { revokedAt: new Date() });
}
