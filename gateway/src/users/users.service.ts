import { randomUUID } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import type { CreateUser, Page, PageQuery, Role, UpdateUser, User } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { hashPassword } from '../auth/passwords';
import { accountSubject } from '../auth/sign-in-throttle';
import type { ChangeBy } from '../app-context';
import { conflict, notFound } from '../http/problem';
import { sortColumn } from '../http/sort';
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

const SORTABLE: Record<string, string> = {
  username: 'u.username',
  displayName: 'u.display_name',
  createdAt: 'u.created_at',
  lastSignInAt: 'u.last_sign_in_at',
};

export async function listUsers(ds: DataSource, q: PageQuery & { search?: string }): Promise<Page<User>> {
  const qb = ds.getRepository(UserRow).createQueryBuilder('u');
  if (q.search) qb.where('(u.username LIKE :s OR u.display_name LIKE :s)', { s: `%${q.search}%` });
  qb.orderBy(sortColumn(SORTABLE, q.sort, 'u.username'), q.order === 'desc' && q.sort ? 'DESC' : 'ASC');
  const [rows, total] = await qb
    .skip((q.page - 1) * q.pageSize)
    .take(q.pageSize)
    .getManyAndCount();
  return { items: rows.map(toUser), page: q.page, pageSize: q.pageSize, total };
}

export async function createUser(ds: DataSource, input: CreateUser, actor: ChangeBy): Promise<User> {
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

export async function updateUser(ds: DataSource, id: string, patch: UpdateUser, actor: ChangeBy): Promise<User> {
  return ds.transaction(async (m) => {
    const row = await m.findOneBy(UserRow, { id });
    if (!row) throw notFound(`User ${id}`);
    const before = toUser(row);
    await keepOneActiveAdmin(m, row, patch);
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

const isActiveAdmin = (u: { disabled: boolean | number; roles: Role[] }) => !Number(u.disabled) && u.roles.includes('admin');

/**
 * Refuses (409) a change that would leave no active admin: nobody could then manage users. The
 * active users' rows are locked (FOR UPDATE), so two admins demoting each other at the same time
 * cannot both succeed.
 */
async function keepOneActiveAdmin(m: EntityManager, row: UserRow, patch: UpdateUser): Promise<void> {
  if (!isActiveAdmin(row)) return;
  const after = { disabled: patch.disabled ?? row.disabled, roles: patch.roles ?? row.roles };
  if (isActiveAdmin(after)) return;
  const active = (await m.query('SELECT id, roles FROM app_user WHERE disabled = 0 FOR UPDATE')) as { id: string; roles: string }[];
  const others = active.filter((u) => u.id !== row.id && (JSON.parse(u.roles) as Role[]).includes('admin'));
  if (others.length === 0) throw conflict(`${row.username} is the last active admin; make another user an admin before disabling or demoting this one.`);
}

/** Sets a new password, unlocks the account and ends its open sessions. */
export async function resetPassword(ds: DataSource, id: string, password: string, actor: ChangeBy): Promise<void> {
  const passwordHash = await hashPassword(password);
  await ds.transaction(async (m) => {
    const row = await m.findOneBy(UserRow, { id });
    if (!row) throw notFound(`User ${id}`);
    await m.update(UserRow, id, { passwordHash, passwordChangedAt: new Date(), failedAttempts: 0, lockedUntil: null });
    await m.query(`DELETE FROM sign_in_throttle WHERE scope = 'account' AND subject = ?`, [accountSubject(row.username)]);
    await m.update(UserSessionRow, { userId: id }, { revokedAt: new Date() });
    await recordAudit(m, { ...actor, action: 'user.reset-password', entityType: 'user', entityId: id, after: { username: row.username } });
  });
}
