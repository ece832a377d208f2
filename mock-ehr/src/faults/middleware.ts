import type { Request, RequestHandler, Response } from 'express';
import { operationOutcome, type IssueCode } from '../fhir/operation-outcome.js';
import type { FaultInjector } from './fault-rules.js';

const ISSUE_FOR_STATUS: Record<number, IssueCode> = { 401: 'login', 403: 'forbidden', 408: 'timeout', 429: 'throttled', 503: 'transient' };

/** Which fault scopes a request falls in: the token endpoint, the metadata, or resource types. */
export function faultScopes(req: Request): string[] {
  const full = req.baseUrl + req.path;
  if (full.startsWith('/oauth/')) return ['token'];
  const first = full.replace(/^\/fhir\/?/, '').split('/')[0] ?? '';
  if (first === '') {
    const entries = (req.body as { entry?: { resource?: { resourceType?: unknown }; request?: { url?: unknown } }[] } | undefined)?.entry;
    const types = Array.isArray(entries)
      ? entries.map((e) => e?.resource?.resourceType ?? String(e?.request?.url ?? '').split(/[/?]/)[0]).filter((t): t is string => typeof t === 'string')
      : [];
    return ['Bundle', ...new Set(types)];
  }
  return [first];
}

export function injectFaults(faults: FaultInjector): RequestHandler {
  return (req, res, next) => {
    const decision = faults.decide(faultScopes(req));
    const act = () => {
      switch (decision.kind) {
        case 'none':
          return next();
        case 'drop':
          res.locals.fault = 'drop';
          return req.socket.destroy();
        case 'hang':
          res.locals.fault = 'hang';
          return; // never answered: the client's timeout is what is being tested
        case 'error':
          res.locals.fault = `error ${decision.status}`;
          return answerError(req, res, decision.status, decision.retryAfterSeconds);
      }
    };
    if (decision.latencyMs > 0) setTimeout(act, decision.latencyMs).unref();
    else act();
  };
}

function answerError(req: Request, res: Response, status: number, retryAfterSeconds?: number): void {
  if ((status === 429 || status === 503) && retryAfterSeconds !== undefined) res.set('Retry-After', String(retryAfterSeconds));
  if ((req.baseUrl + req.path).startsWith('/oauth/')) {
    res.status(status).json({ error: status === 401 ? 'invalid_client' : 'temporarily_unavailable', error_description: 'injected fault' });
    return;
  }
  if (status === 401) res.set('WWW-Authenticate', 'Bearer realm="mock-ehr", error="invalid_token"');
  res
    .status(status)
    .type('application/fhir+json')
    .send(
      JSON.stringify(operationOutcome([{ severity: 'error', code: ISSUE_FOR_STATUS[status] ?? 'exception', diagnostics: `injected fault: HTTP ${status}` }])),
    );
}
