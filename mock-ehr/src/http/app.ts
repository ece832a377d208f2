import express, { type ErrorRequestHandler } from 'express';
import { adminRouter, type AdminDeps } from '../admin/routes.js';
import { requireBearer, tokenRouter } from '../auth/routes.js';
import type { TokenService } from '../auth/token-service.js';
import type { MockEhrLogger } from '../config.js';
import { injectFaults } from '../faults/middleware.js';
import { capabilityStatement } from '../fhir/capability.js';
import { FhirError, operationOutcome } from '../fhir/operation-outcome.js';
import { FHIR_JSON } from '../fhir/respond.js';
import type { ResourceService } from '../fhir/resource-service.js';
import { fhirRouter } from '../fhir/routes.js';
import type { ResourceStore } from '../fhir/store.js';
import type { RequestLog } from './request-log.js';

export interface AppDeps extends AdminDeps {
  service: ResourceService;
  store: ResourceStore;
  tokens: TokenService;
  requests: RequestLog;
  logger: MockEhrLogger;
  urls: () => { baseUrl: string; fhirBaseUrl: string; tokenUrl: string };
}

export function buildApp(d: AppDeps): express.Express {
  const app = express();
  app.disable('x-powered-by');
  app.set('etag', false); // FHIR ETags are version ids, set per resource
  app.use(d.requests.middleware());
  app.use(adminRouter(d));

  app.get('/', (_req, res) => void res.json({ name: 'Ebbgate mock EHR', ...d.urls(), mailPage: `${d.urls().baseUrl}/mail` }));

  app.use('/oauth', injectFaults(d.faults));
  app.use(tokenRouter(d.tokens, () => d.urls().tokenUrl));

  app.use('/fhir', express.json({ type: ['application/json', 'application/fhir+json'], limit: '50mb' }));
  app.use('/fhir', injectFaults(d.faults));
  app.get('/fhir/metadata', (_req, res) => {
    res.type(FHIR_JSON).send(JSON.stringify(capabilityStatement(d.urls().fhirBaseUrl, d.urls().tokenUrl)));
  });
  app.get('/fhir/.well-known/smart-configuration', (_req, res) => {
    res.json({
      token_endpoint: d.urls().tokenUrl,
      grant_types_supported: ['client_credentials'],
      token_endpoint_auth_methods_supported: ['client_secret_post', 'client_secret_basic', 'client_secret_jwt'],
      token_endpoint_auth_signing_alg_values_supported: ['HS256'],
      scopes_supported: ['system/*.read', 'system/*.write'],
      capabilities: ['client-confidential-symmetric'],
    });
  });
  app.use('/fhir', requireBearer(d.tokens));
  app.use('/fhir', fhirRouter({ store: d.store, service: d.service, fhirBase: () => d.urls().fhirBaseUrl, quirks: d.quirks }));
  app.use(errorHandler(d.logger));
  return app;
}

function errorHandler(logger: MockEhrLogger): ErrorRequestHandler {
  return (err: unknown, req, res, _next) => {
    let failure: FhirError;
    const e = err as { type?: string; status?: number; message?: string };
    if (err instanceof FhirError) failure = err;
    else if (e.type === 'entity.parse.failed') failure = FhirError.of(400, 'structure', `the body is not valid JSON: ${e.message ?? ''}`);
    else if (e.type === 'entity.too.large') failure = FhirError.of(413, 'too-costly', 'the body is too large');
    else if (typeof e.status === 'number' && e.status >= 400 && e.status < 500) failure = FhirError.of(e.status, 'invalid', e.message ?? 'bad request');
    else {
      logger.error(`mock EHR: unexpected error on ${req.method} ${req.originalUrl}: ${String((err as Error)?.stack ?? err)}`);
      failure = FhirError.of(500, 'exception', 'unexpected server error');
    }
    if (failure.status >= 400 && failure.status < 500) logger.warn(`mock EHR ${req.method} ${req.originalUrl} → ${failure.status}: ${failure.message}`);
    if (res.headersSent) return;
    res
      .status(failure.status)
      .type(FHIR_JSON)
      .send(JSON.stringify(operationOutcome(failure.issues)));
  };
}
