import type { ApiKeyIssued } from '@ebbgate/shared';
import type { AppContext, ChangeBy } from '../app-context';
import { issueDeviceKey, revokeDeviceKeys } from '../auth/device-keys';
import { forgetDevices } from './device-cache';
import { getMonitor } from './monitors.service';

/**
 * A new API key for the monitor (shown once; the earlier key is revoked, audited). Ingest's
 * monitor cache forgets what it knew here, so the next batch is judged on the database.
 */
export async function issueMonitorKey(ctx: AppContext, monitorId: string, by: ChangeBy): Promise<ApiKeyIssued> {
  const issued = await issueDeviceKey(ctx, monitorId, by);
  forgetDevices();
  return issued;
}

/** Revokes the monitor's live keys (audited); an unknown monitor is a 404, a monitor without a key a no-op. */
export async function revokeMonitorKey(ctx: AppContext, monitorId: string, by: ChangeBy): Promise<void> {
  await getMonitor(ctx.ds, monitorId);
  await revokeDeviceKeys(ctx, monitorId, by);
}
