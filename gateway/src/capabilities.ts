/**
 * The gateway's capabilities, composed in one place: each contributes routers (under /api/v1),
 * readiness checks, and background services (workers, listeners) with start/stop.
 */
import type { Router } from 'express';
import type { AppContext, BackgroundService, ReadinessCheck } from './app-context';
import { auditRouter } from './audit/audit.router';
import { authRouter } from './auth/auth.router';
import type { Metrics } from './http/metrics';
import { overviewRouter } from './overview/overview.router';
import { boardRouter } from './board/board.router';
import { settingsRouter } from './settings/settings.router';
import { usersRouter } from './users/users.router';
import { devicesRouter } from './devices/devices.router';
import { buildIngest } from './ingest/ingest.capability';
import { buildAnalysis } from './analysis/analysis.capability';
import { buildDelivery } from './delivery/delivery.module';

export interface Capabilities {
  routers: Router[];
  /** Routers that keep the raw request body (ingest), mounted before the JSON parser. */
  rawBodyRouters?: Router[];
  readiness: ReadinessCheck[];
  services: BackgroundService[];
}

export function buildCapabilities(ctx: AppContext, _metrics: Metrics): Capabilities {
  const ingest = buildIngest(ctx, _metrics);
  const analysis = buildAnalysis(ctx);
  const delivery = buildDelivery(ctx, _metrics);
  return {
    routers: [
      authRouter(ctx),
      usersRouter(ctx),
      auditRouter(ctx),
      settingsRouter(ctx),
      overviewRouter(ctx),
      boardRouter(ctx),
      devicesRouter(ctx),
      ...ingest.routers,
      ...analysis.routers,
      ...delivery.routers,
    ],
    rawBodyRouters: [...ingest.rawBodyRouters],
    readiness: [...delivery.readiness],
    services: [...ingest.services, ...analysis.services, ...delivery.services],
  };
}
