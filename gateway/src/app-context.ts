/**
 * The shared types every layer may use: what a capability is given (AppContext), what it gives
 * back to the composition (BackgroundService, ReadinessCheck), who is calling (Principal) and who
 * asks for a change (ChangeBy). This module sits at the bottom of the gateway: it imports types
 * only (the config schema's, the shared schemas'), nothing from http or a capability, so any
 * module can import it without a cycle.
 */
import type { Logger } from 'pino';
import type { DataSource } from 'typeorm';
import type { Role } from '@ebbgate/shared';
import type { Config } from './config/schema';

/** What every capability is given: the config, the database and the logger. */
export interface AppContext {
  config: Config;
  ds: DataSource;
  logger: Logger;
}

/** A worker or listener the gateway starts after the HTTP server and stops on shutdown. */
export interface BackgroundService {
  name: string;
  start(): Promise<void>;
  /** Finish in-flight work, then stop. */
  stop(): Promise<void>;
}

/** One line of /readyz. */
export interface ReadinessCheck {
  name: string;
  /** A failing critical check makes /readyz answer 503. */
  critical: boolean;
  check: () => Promise<void>;
}

/**
 * Who is calling: a signed-in person or a monitor's API key. The HTTP layer carries it on
 * `req.principal` (http/principal.ts; set by auth's `authenticate`, checked by `defineRoute`).
 */
export type Principal =
  | { kind: 'user'; userId: string; username: string; displayName: string; roles: Role[]; sessionId: string }
  | { kind: 'device'; keyId: string; monitorId: string; monitorIdentifier: string };

/** Who made this change, for the audit log: the signed-in person or device (none: the system) and the request. */
export interface ChangeBy {
  principal: Principal | undefined;
  requestId?: string;
}
