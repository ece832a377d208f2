import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { issueDeviceKey, revokeDeviceKeys } from '../../src/auth/device-keys';
import { insertMonitor } from '../support/devices';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

describe('device API keys', () => {
  it('are random, stored only as a hash, and bound to their monitor', async () => {
    const monitor = await insertMonitor(gw.ctx.ds);
    const a = await issueDeviceKey(gw.ctx, monitor.id, undefined);
    const b = await issueDeviceKey(gw.ctx, monitor.id, undefined);
    expect(a.apiKey).not.toEqual(b.apiKey);
    const rows = (await gw.ctx.ds.query('SELECT key_hash, monitor_id, revoked_at FROM device_key WHERE monitor_id = ?', [monitor.id])) as {
      key_hash: string;
      revoked_at: Date | null;
    }[];
    expect(rows).toHaveLength(2);
    for (const r of rows) expect(a.apiKey).not.toContain(r.key_hash);
    // Issuing a new key revokes the earlier one.
    expect(rows.filter((r) => r.revoked_at === null)).toHaveLength(1);
  });

  it('authenticate as a device: console routes answer 403, a revoked or unknown key 401', async () => {
    const monitor = await insertMonitor(gw.ctx.ds);
    const { apiKey } = await issueDeviceKey(gw.ctx, monitor.id, undefined);
    const res = await request(gw.server).get('/api/v1/users').set('Authorization', `Bearer ${apiKey}`);
    expect(res.status).toBe(403);
    await revokeDeviceKeys(gw.ctx, monitor.id, undefined);
    const revoked = await request(gw.server).get('/api/v1/users').set('Authorization', `Bearer ${apiKey}`);
    expect(revoked.status).toBe(401);
    const forged = await request(gw.server)
      .get('/api/v1/users')
      .set('Authorization', `Bearer ${apiKey.slice(0, -4)}AAAA`);
    expect(forged.status).toBe(401);
  });

  it('writes audit rows for issue and revoke', async () => {
    const monitor = await insertMonitor(gw.ctx.ds);
    await issueDeviceKey(gw.ctx, monitor.id, undefined);
    await revokeDeviceKeys(gw.ctx, monitor.id, undefined);
    const rows = (await gw.ctx.ds.query('SELECT action FROM audit_entry WHERE entity_id = ? ORDER BY id', [monitor.id])) as { action: string }[];
    expect(rows.map((r) => r.action)).toEqual(['device-key.issue', 'device-key.revoke']);
  });
});
