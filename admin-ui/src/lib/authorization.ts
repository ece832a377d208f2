import type { Role } from '@ebbgate/shared';

/**
 * What each role may see and do in the console. The gateway enforces the same rules; this only
 * keeps the console from offering what would be refused (mirrors gateway/src/auth/permissions.ts;
 * devices are readable by all, but only shown to those who manage them).
 */
const ALL: readonly Role[] = ['admin', 'integrator', 'reviewer', 'operator'];
export const ACCESS = {
  overview: ALL,
  board: ALL,
  assessments: ALL,
  markInError: ['reviewer'],
  testBench: ['integrator'],
  devices: ['integrator', 'admin'],
  manageDevices: ['integrator'],
  deliveries: ['operator', 'reviewer', 'admin'],
  manageDeliveries: ['operator'],
  manageDestinations: ['operator'],
  inbound: ['integrator', 'operator'],
  reprocessInbound: ['integrator'],
  discardInbound: ['integrator', 'operator'],
  users: ['admin'],
  audit: ['admin'],
  settings: ALL,
  manageSettings: ['admin'],
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof ACCESS;

export function can(roles: readonly Role[] | undefined, permission: Permission): boolean {
  if (!roles) return false;
  return (ACCESS[permission] as readonly Role[]).some((r) => roles.includes(r));
}
