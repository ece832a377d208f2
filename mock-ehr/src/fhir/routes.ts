import express, { type Request, type RequestHandler } from 'express';
import { searchsetBundle } from './bundles.js';
import { FhirError } from './operation-outcome.js';
import { FHIR_JSON, sendResource } from './respond.js';
import { requireType, type ResourceService } from './resource-service.js';
import { parseSearch, runSearch } from './search.js';
import type { ResourceStore } from './store.js';
import type { Quirks } from './quirks.js';
import { processBundle } from './transaction.js';

// Thin REST routes for the FHIR R4 API; the work is in ResourceService and processBundle.

/** Query string exactly as sent (Express's parser would fold repeated keys differently). */
function rawQuery(req: Request): URLSearchParams {
  const q = req.originalUrl.indexOf('?');
  return new URLSearchParams(q >= 0 ? req.originalUrl.slice(q + 1) : '');
}

/** Route parameter as one string (Express 5 types allow arrays for wildcards). */
const p = (v: string | string[] | undefined): string => (Array.isArray(v) ? v.join('/') : (v ?? ''));

const requireJsonBody: RequestHandler = (req, _res, next) => {
  if (!req.is(['application/json', 'application/fhir+json'])) {
    return next(FhirError.of(415, 'not-supported', 'send the resource as application/fhir+json'));
  }
  next();
};

export function fhirRouter(deps: { store: ResourceStore; service: ResourceService; fhirBase: () => string; quirks?: Quirks }): express.Router {
  const { store, service } = deps;
  const r = express.Router();

  r.post('/', requireJsonBody, (req, res) => {
    const minimal = /return=minimal/i.test(req.get('prefer') ?? '');
    const bundle = processBundle(req.body, { store, service, fhirBase: deps.fhirBase(), minimal, quirks: deps.quirks });
    res.status(200).type(FHIR_JSON).send(JSON.stringify(bundle));
  });

  r.get('/:type', (req, res) => {
    const type = p(req.params.type);
    requireType(type);
    const query = rawQuery(req);
    const search = parseSearch(type, query);
    res.type(FHIR_JSON).send(JSON.stringify(searchsetBundle(deps.fhirBase(), type, query, search, runSearch(store, type, search))));
  });

  r.post('/:type', requireJsonBody, (req, res) => {
    const result = service.create(p(req.params.type), req.body, { ifNoneExist: req.get('if-none-exist') ?? undefined });
    sendResource(req, res, result.status, result.resource, deps.fhirBase(), { location: true, quirks: deps.quirks });
  });

  r.put('/:type', requireJsonBody, (req, res) => {
    const query = rawQuery(req).toString();
    if (!query) throw FhirError.of(400, 'invalid', 'PUT needs an id (Type/id) or a search (Type?param=value)');
    const result = service.conditionalUpdate(p(req.params.type), query, req.body);
    sendResource(req, res, result.status, result.resource, deps.fhirBase(), { location: result.status === 201, quirks: deps.quirks });
  });

  r.get('/:type/:id', (req, res) => {
    sendResource(req, res, 200, service.read(p(req.params.type), p(req.params.id)), deps.fhirBase());
  });

  r.get('/:type/:id/_history/:vid', (req, res) => {
    sendResource(req, res, 200, service.vread(p(req.params.type), p(req.params.id), p(req.params.vid)), deps.fhirBase());
  });

  r.put('/:type/:id', requireJsonBody, (req, res) => {
    const result = service.update(p(req.params.type), p(req.params.id), req.body, { ifMatch: req.get('if-match') ?? undefined });
    sendResource(req, res, result.status, result.resource, deps.fhirBase(), { location: result.status === 201, quirks: deps.quirks });
  });

  r.all('/{*rest}', (req) => {
    throw FhirError.of(405, 'not-supported', `${req.method} ${req.path} is not supported by this server`);
  });
  return r;
}
