import { createHash, randomBytes, randomUUID, timingSafeEqual } from 'node:crypto';
import { IsNull } from 'typeorm';
import type { AppContext, ChangeBy } from '../app-context';
import { recordAudit } from '../audit/audit.service';
import { DeviceKeyRow, MonitorRow } from '../devices/device.entities';
import { notFound } from '../http/problem';
import type { Principal } from './principal';

const PREFIX = 'ebk';

const sha256 = (s: string) => createHash('sha256').update(s).digest('hex');

/**
 * Issues a new API key for a monitor, revoking any earlier one. The key is `ebk_<keyId>_<secret>`;
 * only SHA-256(secret) is stored (the secret is 256 random bits, so a slow hash adds nothing).
 */
export async function issueDeviceKey(ctx: AppContext, monitorId: string, by: ChangeBy = { principal: undefined }) {
  return ctx.ds.transaction(async (m) => {
    const monitor = await m.findOneBy(MonitorRow, { id: monitorId });
    if (!monitor) throw notFound(`Monitor ${monitorId}`);
    const now = new Date();
    await m.createQueryBuilder().update(DeviceKeyRow).set({ revokedAt: now }).where('monitor_id = :monitorId AND revoked_at IS NULL', { monitorId }).execute();
    const keyId = randomUUID();
    const secret = randomBytes(32).toString('base64url');
    keyCache.clear();
    await m.insert(DeviceKeyRow, { id: keyId, monitorId, keyHash: sha256(secret), createdAt: now, revokedAt: null, lastUsedAt: null });
    await recordAudit(m, {
      principal: by.principal,
      action: 'device-key.issue',
      entityType: 'monitor',
      entityId: monitorId,
      after: { keyId },
      requestId: by.requestId,
    });
    return { apiKey: `${PREFIX}_${keyId}_${secret}`, keyId, createdAt: now.toISOString() };
  });
}

export async function revokeDeviceKeys(ctx: AppContext, monitorId: string, by: ChangeBy = { principal: undefined }): Promise<number> {
  return ctx.ds.transaction(async (m) => {
    const live = await m.find(DeviceKeyRow, { where: { monitorId, revokedAt: IsNull() } });
    if (!live.length) return 0;
    await m
      .createQueryBuilder()
      .update(DeviceKeyRow)
      .set({ revokedAt: new Date() })
      .where('monitor_id = :monitorId AND revoked_at IS NULL', { monitorId })
      .execute();
    await recordAudit(m, {
      principal: by.principal,
      action: 'device-key.revoke',
      entityType: 'monitor',
      entityId: monitorId,
      before: { keyIds: live.map((k) => k.id) },
      requestId: by.requestId,
    });
    keyCache.clear();
    return live.length;
  });
}

/** Verified keys are remembered briefly so ingest does not hit the database per batch. */
const KEY_CACHE_MS = 5_000;
const keyCache = new Map<string, { principal: Principal; until: number }>();

/** Resolves `Authorization: Bearer ebk_…` to the device principal of its monitor, or null. */
export async function principalFromDeviceKey(ctx: AppContext, presented: string): Promise<Principal | null> {
  const cached = keyCache.get(presented);
  if (cached && cached.until > Date.now()) return cached.principal;
  const principal = await lookUpDeviceKey(ctx, presented);
  if (principal) {
    if (keyCache.size > 10_000) keyCache.clear();
    keyCache.set(presented, { principal, until: Date.now() + KEY_CACHE_MS });
  }
  return principal;
}

async function lookUpDeviceKey(ctx: AppContext, presented: string): Promise<Principal | null> {
  const match = /^ebk_([0-9a-f-]{36})_([A-Za-z0-9_-]{20,})$/.exec(presented);
  if (!match) return null;
  const [, keyId, secret] = match as unknown as [string, string, string];
  const key = await ctx.ds.getRepository(DeviceKeyRow).findOneBy({ id: keyId });
  if (!key || key.revokedAt) return null;
  const a = Buffer.from(key.keyHash);
  const b = Buffer.from(sha256(secret));
  if (a.length !== b.length || !timingSafeEqual(a, b)) return null;
  const monitor = await ctx.ds.getRepository(MonitorRow).findOneBy({ id: key.monitorId });
  if (!monitor || !monitor.enabled) return null;
  return { kind: 'device', keyId: key.id, monitorId: monitor.id, monitorIdentifier: monitor.identifier };
}
