import type { Principal } from '../app-context';

/**
 * Who is calling, as the HTTP layer carries it on `req.principal` (set by auth's `authenticate`
 * middleware, checked by `defineRoute`). Typed in app-context.ts, below http and auth, so http
 * never imports auth and app-context imports nothing above it.
 */
export type { Principal };

declare module 'express-serve-static-core' {
  interface Request {
    principal?: Principal;
  }
}
