import type { Role } from '@ebbgate/shared';

/**
 * What each role may see and do in the console. The gateway enforces the same rules; this only
 * keeps the console from offering what would be refused.
 */
export const ACCESS = {
  overview: ['admin', 'integrator', 'reviewer', 'operator'],
  assessments: ['admin', 'integrator', 'reviewer', 'operator'],
  markInError: ['reviewer'],
  testBench: ['integrator'],
  devices: ['integrator', 'admin'],
  manageDevices: ['integrator'],
  deliveries: ['operator', 'admin'],
  manageDeliveries: ['operator'],
  inbound: ['integrator', 'operator', 'admin'],
  manageInbound: ['integrator', 'operator'],
  users: ['admin'],
  audit: ['admin'],
  settings: ['admin', 'reviewer'],
  manageSettings: ['admin'],
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof ACCESS;

export function can(roles: readonly Role[] | undefined, permission: Permission): boolean {
  if (!roles) return false;
  return (ACCESS[permission] as readonly Role[]).some((r) => roles.includes(r));
}
