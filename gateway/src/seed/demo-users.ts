import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import type { Role } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { hashPassword, verifyPassword } from '../auth/passwords';
import { repoRoot } from '../config/load';
import { UserRow } from '../users/user.entity';

export interface DemoUser {
  username: string;
  password: string;
  displayName: string;
  roles: Role[];
}

export const DEMO_USERS_FILE = path.join(repoRoot, 'config/demo/users.json');

export function readDemoUsers(file = DEMO_USERS_FILE): DemoUser[] {
  return JSON.parse(readFileSync(file, 'utf8')) as DemoUser[];
}

/** Creates the demo users that do not exist yet (one per role). */
export async function seedDemoUsers(ds: DataSource, users = readDemoUsers()): Promise<number> {
  let created = 0;
  for (const u of users) {
    if (await ds.getRepository(UserRow).findOneBy({ username: u.username })) continue;
    const now = new Date();
    const row = { id: randomUUID(), username: u.username, displayName: u.displayName, passwordHash: await hashPassword(u.password), roles: u.roles, disabled: false, failedAttempts: 0, lockedUntil: null, lastSignInAt: null, passwordChangedAt: now, createdAt: now };
    await ds.transaction(async (m) => {
      await m.insert(UserRow, row);
      await recordAudit(m, { principal: undefined, action: 'user.create', entityType: 'user', entityId: row.id, after: { username: u.username, roles: u.roles, seeded: 'demo' } });
    });
    created++;
  }
  return created;
}

/** Usernames of enabled accounts that still accept their published demo password. */
export async function unchangedDemoCredentials(ds: DataSource, users = readDemoUsers()): Promise<string[]> {
  const found: string[] = [];
  for (const u of users) {
    const row = await ds.getRepository(UserRow).findOneBy({ username: u.username });
    if (row && !row.disabled && (await verifyPassword(u.password, row.passwordHash))) found.push(u.username);
  }
  return found;
}
