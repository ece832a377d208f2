import { existsSync } from 'node:fs';
import path from 'node:path';
import cookieParser from 'cookie-parser';
import express, { type Express, type RequestHandler, type Router } from 'express';
import helmet from 'helmet';
import type { AppContext, ReadinessCheck } from '../app-context';
import { apiDocsRouter } from './api-docs';
import { buildOpenApi } from './openapi';
import { createMetrics, type Metrics } from './metrics';
import { HttpProblem, notFoundHandler, problemHandler } from './problem';
import { httpLogger } from './logger';
import { metricsGuard, readinessHandler } from './ops';
import { requestRateLimits } from './rate-limit';

export const GATEWAY_VERSION = '0.1.0';

export interface AppParts {
  /** Routers mounted under /api/v1, in order. */
  routers: Router[];
  /** Routers that read their request body themselves (raw bytes), mounted before the JSON parser. */
  rawBodyRouters?: Router[];
  readiness?: ReadinessCheck[];
  metrics?: Metrics;
  /**
   * Finds who is calling and sets `req.principal` (auth's middleware, handed in so http does not
   * import auth). Runs before any route, so authorisation happens before a body is read.
   */
  authenticate?: RequestHandler;
}

/** Strict CSP the console lives with: everything from our own origin, nothing inline. */
const CSP = {
  useDefaults: false,
  directives: {
    defaultSrc: ["'self'"],
    scriptSrc: ["'self'"],
    styleSrc: ["'self'"],
    imgSrc: ["'self'", 'data:', 'blob:'],
    fontSrc: ["'self'"],
    connectSrc: ["'self'"],
    objectSrc: ["'none'"],
    baseUri: ["'none'"],
    formAction: ["'self'"],
    frameAncestors: ["'none'"],
  },
};

/** JSON bodies only, except where a route declares otherwise (multipart uploads). */
const requireJsonBody: RequestHandler = (req, _res, next) => {
  const hasBody = Number(req.headers['content-length'] ?? 0) > 0 || req.headers['transfer-encoding'] !== undefined;
  if (!hasBody || ['GET', 'HEAD', 'DELETE', 'OPTIONS'].includes(req.method)) return next();
  if (req.is('application/json') || req.is('multipart/form-data')) return next();
  next(new HttpProblem(415, 'Unsupported media type', `Send application/json (got ${req.headers['content-type'] ?? 'no content type'}).`));
};

export function createApp(ctx: AppContext, parts: AppParts): Express {
  const app = express();
  const metrics = parts.metrics ?? createMetrics();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.use(helmet({ contentSecurityPolicy: CSP, crossOriginEmbedderPolicy: false }));
  app.use(httpLogger(ctx.logger));
  app.use(metrics.middleware);

  app.get('/healthz', (_req, res) => res.json({ status: 'alive', version: GATEWAY_VERSION }));
  const identify = parts.authenticate ?? ((_req, _res, next) => next());
  app.get('/readyz', cookieParser(), readinessHandler(ctx, parts.readiness ?? [], identify));
  app.get('/metrics', metricsGuard(ctx.config.gateway.metricsToken), async (_req, res) => {
    res.type(metrics.registry.contentType).send(await metrics.registry.metrics());
  });

  // JSON is parsed by each route after its permission check (route.ts), never before.
  app.locals.jsonParser = express.json({ limit: ctx.config.gateway.jsonBodyLimit });
  const api = express.Router();
  api.use(...requestRateLimits(ctx.config.gateway.rateLimit));
  for (const r of parts.rawBodyRouters ?? []) api.use(r);
  api.use(cookieParser());
  api.use(identify);
  api.use(requireJsonBody);
  for (const r of parts.routers) api.use(r);
  api.get('/openapi.json', (_req, res) => res.json(buildOpenApi(GATEWAY_VERSION)));
  api.use(notFoundHandler);
  app.use('/api/v1', api);
  app.use(apiDocsRouter());

  mountConsole(app, ctx.config.gateway.consoleDir);
  app.use(problemHandler(ctx.logger));
  return app;
}

/** Serves the built console, with client-side routes falling back to index.html. */
function mountConsole(app: Express, dir: string): void {
  const index = path.join(dir, 'index.html');
  if (existsSync(index)) {
    app.use(
      express.static(dir, { index: false, maxAge: '1h', setHeaders: (res, file) => file.endsWith('.html') && res.setHeader('Cache-Control', 'no-store') }),
    );
    app.get(/^\/(?!api\/|healthz|readyz|metrics).*/, (_req, res) => res.sendFile(index));
    return;
  }
  app.get('/', (_req, res) =>
    res
      .type('html')
      .send(
        '<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Ebbgate</title></head><body><h1>Ebbgate gateway</h1><p>The console is not built yet (<code>npm run build -w admin-ui</code>). The API is at <a href="/api/docs">/api/docs</a>.</p></body></html>',
      ),
  );
}
