import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import type { CreateUser, Page, PageQuery, UpdateUser, User } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { hashPassword } from '../auth/passwords';
import type { Principal } from '../auth/principal';
import { conflict, notFound } from '../http/problem';
import { UserRow, UserSessionRow } from './user.entity';

export function toUser(row: UserRow): User {
  return {
    id: row.id,
    username: row.username,
    displayName: row.displayName,
    roles: row.roles,
    disabled: row.disabled,
    lockedUntil: row.lockedUntil && row.lockedUntil > new Date() ? row.lockedUntil.toISOString() : null,
    lastSignInAt: row.lastSignInAt?.toISOString() ?? null,
    createdAt: row.createdAt.toISOString(),
  };
}

interface Actor {
  principal: Principal | undefined;
  requestId?: string;
}

const SORTABLE: Record<string, string> = { username: 'u.username', displayName: 'u.display_name', createdAt: 'u.created_at', lastSignInAt: 'u.last_sign_in_at' };

export async function listUsers(ds: DataSource, q: PageQuery & { search?: string }): Promise<Page<User>> {
  const qb = ds.getRepository(UserRow).createQueryBuilder('u');
  if (q.search) qb.where('(u.username LIKE :s OR u.display_name LIKE :s)', { s: `%${q.search}%` });
  qb.orderBy(SORTABLE[q.sort ?? ''] ?? 'u.username', q.order === 'desc' && q.sort ? 'DESC' : 'ASC');
  const [rows, total] = await qb.skip((q.page - 1) * q.pageSize).take(q.pageSize).getManyAndCount();
  return { items: rows.map(toUser), page: q.page, pageSize: q.pageSize, total };
}

export async function createUser(ds: DataSource, input: CreateUser, actor: Actor): Promise<User> {
  const passwordHash = await hashPassword(input.password);
  return ds.transaction(async (m) => {
    if (await m.findOneBy(UserRow, { username: input.username })) throw conflict(`A user named ${input.username} already exists.`);
    const now = new Date();
    const row = m.create(UserRow, {
      id: randomUUID(),
      username: input.username,
      displayName: input.displayName,
      passwordHash,
      roles: [...new Set(input.roles)],
      disabled: false,
      failedAttempts: 0,
      lockedUntil: null,
      lastSignInAt: null,
      passwordChangedAt: now,
      createdAt: now,
    });
    await m.insert(UserRow, row);
    const user = toUser(row);
    await recordAudit(m, { ...actor, action: 'user.create', entityType: 'user', entityId: row.id, after: user });
    return user;
  });
}

export async function updateUser(ds: DataSource, id: string, patch: UpdateUser, actor: Actor): Promise<User> {
  return ds.transaction(async (m) => {
    const row = await m.findOneBy(UserRow, { id });
    if (!row) throw notFound(`User ${id}`);
    const before = toUser(row);
    if (patch.displayName !== undefined) row.displayName = patch.displayName;
    if (patch.roles !== undefined) row.roles = [...new Set(patch.roles)];
    if (patch.disabled !== undefined) row.disabled = patch.disabled;
    await m.save(UserRow, row);
    if (patch.disabled) await m.update(UserSessionRow, { userId: id }, { revokedAt: new Date() });
    const after = toUser(row);
    const action = patch.disabled === true ? 'user.disable' : patch.disabled === false ? 'user.enable' : patch.roles ? 'user.change-roles' : 'user.update';
    await recordAudit(m, { ...actor, action, entityType: 'user', entityId: id, before, after });
    return after;
  });
}

/** Sets a new password, unlocks the account and ends its open sessions. */
export async function resetPassword(ds: DataSource, id: string, password: string, actor: Actor): Promise<void> {
  const passwordHash = await hashPassword(password);
  await ds.transaction(async (m) => {
    const row = await m.findOneBy(UserRow, { id });
    if (!row) throw notFound(`User ${id}`);
    await m.update(UserRow, id, { passwordHash, passwordChangedAt: new Date(), failedAttempts: 0, lockedUntil: null });
    await m.update(UserSessionRow, { userId: id }, { revokedAt: new Date() });
    await recordAudit(m, { ...actor, action: 'user.reset-password', entityType: 'user', entityId: id, after: { username: row.username } });
  });
}
