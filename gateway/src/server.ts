import { readFileSync } from 'node:fs';
import { createServer, type Server, type ServerOptions } from 'node:http';
import { createServer as createHttpsServer } from 'node:https';
import path from 'node:path';
import type { Logger } from 'pino';
import type { DataSource } from 'typeorm';
import type { AppContext } from './app-context';
import { authenticate } from './auth/auth.middleware';
import { buildCapabilities } from './capabilities';
import { repoRoot } from './config/load';
import type { Config } from './config/schema';
import { createDataSource, migrateWith } from './db/data-source';
import { createApp } from './http/app';
import { createLogger } from './http/logger';
import { createMetrics } from './http/metrics';
import { seedDemoUsers, unchangedDemoCredentials } from './seed/demo-users';

export interface GatewayOptions {
  config: Config;
  logger?: Logger;
  /** Apply pending migrations at start (development and tests; production runs db:migrate). */
  migrate?: boolean;
  seedDemo?: boolean;
  /** Start workers and listeners (default: config.workers.enabled). */
  services?: boolean;
}

export interface RunningGateway {
  ctx: AppContext;
  server: Server;
  url: string;
  stop(): Promise<void>;
}

/**
 * Least privilege: the gateway's own database user should hold data privileges only (migrations
 * run as DATABASE_MIGRATION_URL). Says so loudly when it can change the schema or the audit triggers.
 */
async function warnIfSchemaPrivileges(ds: DataSource, logger: Logger): Promise<void> {
  const grants = ((await ds.query('SHOW GRANTS').catch(() => [])) as Record<string, string>[]).map((r) => Object.values(r)[0] ?? '');
  const broad = grants.filter((g) => /\b(ALL PRIVILEGES|CREATE|DROP|ALTER|TRIGGER|SUPER)\b/.test(g.replace(/IDENTIFIED BY .*/, '')));
  if (broad.length)
    logger.warn(
      { grants: broad.map((g) => g.replace(/IDENTIFIED BY .*/, '')) },
      'the gateway runs as a database user that can change the schema; run it as a data-only user and migrations as DATABASE_MIGRATION_URL',
    );
}

export class StartupRefused extends Error {
  override name = 'StartupRefused';
}

/** Opens the database, checks it, builds the app and listens; `stop()` drains and closes. */
export async function startGateway(opts: GatewayOptions): Promise<RunningGateway> {
  const { config } = opts;
  const logger = opts.logger ?? createLogger(config.log.level);
  if (opts.migrate) await migrateWith(config.database);
  const ds: DataSource = await createDataSource(config.database.url, config.database.poolSize, config.database.queueLimit).initialize();
  try {
    if (opts.seedDemo) await seedDemoUsers(ds);
    if (config.env === 'production') {
      const unchanged = await unchangedDemoCredentials(ds);
      if (unchanged.length) {
        throw new StartupRefused(
          `refusing to start in production: demo credentials unchanged for ${unchanged.join(', ')}; reset their passwords or disable them first`,
        );
      }
    }
  } catch (err) {
    await ds.destroy();
    throw err;
  }
  await warnIfSchemaPrivileges(ds, logger);
  const ctx: AppContext = { config, ds, logger };
  const metrics = createMetrics();
  const caps = buildCapabilities(ctx, metrics);
  const app = createApp(ctx, {
    routers: caps.routers,
    rawBodyRouters: caps.rawBodyRouters,
    readiness: caps.readiness,
    metrics,
    authenticate: authenticate(ctx),
  });
  // Slow senders: the headers must arrive within headersTimeout and the whole request within
  // requestTimeout (else 408 and the socket closes); checked every second, not Node's default 30 s.
  const { headersTimeoutMs, requestTimeoutMs } = config.gateway;
  const httpOptions: ServerOptions = {
    headersTimeout: Math.min(headersTimeoutMs, requestTimeoutMs),
    requestTimeout: requestTimeoutMs,
    connectionsCheckingInterval: 1_000,
    keepAliveTimeout: 5_000,
  };
  const { tls } = config.gateway;
  const file = (f: string) => readFileSync(path.resolve(repoRoot, f));
  const server: Server = tls.enabled
    ? createHttpsServer({ ...httpOptions, key: file(tls.keyFile), cert: file(tls.certFile), minVersion: 'TLSv1.2' }, app)
    : createServer(httpOptions, app);
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(config.gateway.port, config.gateway.host, () => {
      server.off('error', reject);
      resolve();
    });
  });
  const runServices = opts.services ?? config.workers.enabled;
  if (runServices) for (const s of caps.services) await s.start();
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.gateway.port;
  const url = `${tls.enabled ? 'https' : 'http'}://${config.gateway.host}:${port}`;
  logger.info({ url }, 'gateway listening');

  let stopping: Promise<void> | undefined;
  const stop = () =>
    (stopping ??= (async () => {
      logger.info('gateway stopping: finishing in-flight requests');
      const closed = new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeIdleConnections();
      const force = setTimeout(() => server.closeAllConnections(), config.gateway.shutdownGraceMs);
      if (runServices)
        for (const s of [...caps.services].reverse()) await s.stop().catch((err) => logger.error({ err, service: s.name }, 'service stop failed'));
      await closed;
      clearTimeout(force);
      await ds.destroy();
      logger.info('gateway stopped');
    })());
  return { ctx, server, url, stop };
}
