import type { Role } from '@ebbgate/shared';

/** Who may do what: the one permission table. `device` is a monitor's API key. */
export type PrincipalKind = Role | 'device';

const ALL_PEOPLE: readonly PrincipalKind[] = ['admin', 'integrator', 'reviewer', 'operator'];

export const PERMISSIONS = {
  'session.read': ALL_PEOPLE,
  'overview.read': ALL_PEOPLE,
  'users.read': ['admin'],
  'users.write': ['admin'],
  'audit.read': ['admin'],
  'settings.read': ALL_PEOPLE,
  'settings.write': ['admin'],
  'profiles.read': ALL_PEOPLE,
  'profiles.write': ['integrator'],
  'monitors.read': ALL_PEOPLE,
  'monitors.write': ['integrator'],
  'monitors.keys': ['integrator'],
  'beds.read': ALL_PEOPLE,
  'beds.write': ['integrator'],
  'ingest.write': ['device'],
  'inbound.read': ['integrator', 'operator'],
  'inbound.reprocess': ['integrator'],
  'inbound.discard': ['integrator', 'operator'],
  'analysis.preview': ['integrator'],
  'analysis.reanalyse': ['integrator'],
  'assessments.read': ALL_PEOPLE,
  'assessments.mark-in-error': ['reviewer'],
  'deliveries.read': ['operator', 'reviewer', 'admin'],
  'deliveries.write': ['operator'],
  'destinations.read': ALL_PEOPLE,
  'destinations.write': ['operator'],
} as const satisfies Record<string, readonly PrincipalKind[]>;

export type Permission = keyof typeof PERMISSIONS;

export function allows(permission: Permission, kinds: readonly PrincipalKind[]): boolean {
  const allowed: readonly PrincipalKind[] = PERMISSIONS[permission];
  return kinds.some((k) => allowed.includes(k));
}

/** Routes open to anyone (sign-in itself, health). Listed so the permission walk can skip them. */
export const PUBLIC = 'public' as const;
