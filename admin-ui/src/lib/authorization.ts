import { rolesWith, type Permission as GatewayPermission, type Role } from '@ebbgate/shared';

/**
 * What each role may see and do in the console, derived from the one permission table the
 * gateway enforces (@ebbgate/shared, permissions.ts), so the console never offers what would be
 * refused. A view may be narrower than its gateway permission (devices are readable by all, but
 * only shown to those who manage them), never wider.
 */
const narrowed = (permission: GatewayPermission, shownTo: readonly Role[]) => rolesWith(permission).filter((r) => shownTo.includes(r));

export const ACCESS = {
  overview: rolesWith('overview.read'),
  board: rolesWith('assessments.read'),
  assessments: rolesWith('assessments.read'),
  markInError: rolesWith('assessments.mark-in-error'),
  testBench: rolesWith('analysis.preview'),
  reanalyse: rolesWith('analysis.reanalyse'),
  devices: narrowed('monitors.read', ['integrator', 'admin']),
  manageDevices: rolesWith('monitors.write'),
  edgeCredentials: rolesWith('monitors.keys'),
  deliveries: rolesWith('deliveries.read'),
  manageDeliveries: rolesWith('deliveries.write'),
  manageDestinations: rolesWith('destinations.write'),
  inbound: rolesWith('inbound.read'),
  reprocessInbound: rolesWith('inbound.reprocess'),
  discardInbound: rolesWith('inbound.discard'),
  users: rolesWith('users.read'),
  audit: rolesWith('audit.read'),
  settings: rolesWith('settings.read'),
  manageSettings: rolesWith('settings.write'),
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof ACCESS;

export function can(roles: readonly Role[] | undefined, permission: Permission): boolean {
  if (!roles) return false;
  return (ACCESS[permission] as readonly Role[]).some((r) => roles.includes(r));
}
