import type { Role } from '@ebbgate/shared';

/**
 * Who is calling, as the HTTP layer carries it on `req.principal` (set by auth's `authenticate`
 * middleware, checked by `defineRoute`). Declared here, below auth, so http never imports auth.
 */
export type Principal =
  | { kind: 'user'; userId: string; username: string; displayName: string; roles: Role[]; sessionId: string }
  | { kind: 'device'; keyId: string; monitorId: string; monitorIdentifier: string };

declare module 'express-serve-static-core' {
  interface Request {
    principal?: Principal;
  }
}
