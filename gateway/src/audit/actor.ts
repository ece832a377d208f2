import type { Principal } from '../app-context';

/** Who did it, as the audit log records it (also the name shown for who discarded or paused a delivery). */
export function actorOf(principal: Principal | undefined): { actorType: 'user' | 'device' | 'system'; actorId: string | null; actorName: string | null } {
  if (!principal) return { actorType: 'system', actorId: null, actorName: null };
  if (principal.kind === 'user') return { actorType: 'user', actorId: principal.userId, actorName: principal.username };
  return { actorType: 'device', actorId: principal.keyId, actorName: principal.monitorIdentifier };
}
