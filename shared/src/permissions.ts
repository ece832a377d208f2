import type { Role } from './schemas/auth';

/**
 * Who may do what: the one permission table, shared by the gateway (which enforces it on every
 * route, gateway/src/http/route.ts) and the console (which derives from it what it offers).
 * `device` is a monitor's API key.
 */
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

/** Routes open to anyone (sign-in itself, health). Listed so the permission walk can skip them. */
export const PUBLIC = 'public' as const;

export function allows(permission: Permission, kinds: readonly PrincipalKind[]): boolean {
  const allowed: readonly PrincipalKind[] = PERMISSIONS[permission];
  return kinds.some((k) => allowed.includes(k));
}

/** The people (not devices) a permission lets through. */
export function rolesWith(permission: Permission): readonly Role[] {
  return (PERMISSIONS[permission] as readonly PrincipalKind[]).filter((k): k is Role => k !== 'device');
}
