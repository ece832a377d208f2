import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import type { Role } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import { hashPassword, verifyPassword } from '../auth/passwords';
import { repoRoot } from '../config/load';
import { UserRow } from '../users/user.entity';
import { upgradeDemoData } from './demo-devices';

export interface DemoUser {
  username: string;
  password: string;
  displayName: string;
  roles: Role[];
}

export const DEMO_USERS_FILE = path.join(repoRoot, 'config/demo/users.json');

/** Display names of the demo users before they got invented surnames, and their names now. */
const RETIRED_DISPLAY_NAMES: Record<string, string> = {
  'Ada Okafor (admin)': 'Ada Fenmarrow (admin)',
  'Ivo Brennan (integrator)': 'Ivo Tallowbridge (integrator)',
  'Dr Rhea Lindqvist (reviewer)': 'Dr Rhea Mossgrove-Hale (reviewer)',
  'Otto Mensah (operator)': 'Otto Pellingwood (operator)',
};

export function readDemoUsers(file = DEMO_USERS_FILE): DemoUser[] {
  return JSON.parse(readFileSync(file, 'utf8')) as DemoUser[];
}

/**
 * Creates the demo users that do not exist yet (one per role); on a demo database from before the
 * demo data were renamed, also brings the demo devices and the demo users' names up to date.
 */
export async function seedDemoUsers(ds: DataSource, users = readDemoUsers()): Promise<number> {
  let created = 0;
  await upgradeDemoData(ds);
  for (const u of users) {
    const existing = await ds.getRepository(UserRow).findOneBy({ username: u.username });
    if (existing) {
      if (RETIRED_DISPLAY_NAMES[existing.displayName] === u.displayName)
        await ds.getRepository(UserRow).update({ id: existing.id }, { displayName: u.displayName });
      continue;
    }
    const now = new Date();
    const row = {
      id: randomUUID(),
      username: u.username,
      displayName: u.displayName,
      passwordHash: await hashPassword(u.password),
      roles: u.roles,
      disabled: false,
      failedAttempts: 0,
      lockedUntil: null,
      lastSignInAt: null,
      passwordChangedAt: now,
      createdAt: now,
    };
    await ds.transaction(async (m) => {
      await m.insert(UserRow, row);
      await recordAudit(m, {
        principal: undefined,
        action: 'user.create',
        entityType: 'user',
        entityId: row.id,
        after: { username: u.username, roles: u.roles, seeded: 'demo' },
      });
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
