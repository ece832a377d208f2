import express, { type Request, type RequestHandler, type Response } from 'express';
import { FhirError } from '../fhir/operation-outcome.js';
import { JWT_BEARER_TYPE, verifyClientAssertion } from './client-assertion.js';
import type { TokenService } from './token-service.js';

// POST /oauth/token: OAuth 2.0 client credentials in the SMART backend-services style.
// Client authentication: client_id + client_secret form fields, HTTP Basic, or a client_assertion JWT.

const DEFAULT_SCOPE = 'system/*.read system/*.write';

function oauthError(res: Response, status: number, error: string, description: string): void {
  if (status === 401) res.set('WWW-Authenticate', 'Basic realm="mock-ehr"');
  res.status(status).set('Cache-Control', 'no-store').json({ error, error_description: description });
}

export function tokenRouter(tokens: TokenService, tokenUrl: () => string): express.Router {
  const router = express.Router();
  router.post('/oauth/token', express.urlencoded({ extended: false }), (req: Request, res: Response) => {
    const form = (req.body ?? {}) as Record<string, string | undefined>;
    if (!req.is('application/x-www-form-urlencoded')) {
      return oauthError(res, 400, 'invalid_request', 'the token request must be application/x-www-form-urlencoded');
    }
    if (form.grant_type !== 'client_credentials') {
      return oauthError(res, 400, 'unsupported_grant_type', 'only grant_type=client_credentials is supported');
    }
    const failure = authenticateClient(req, form, tokens, tokenUrl());
    if (failure) return oauthError(res, 401, 'invalid_client', failure);
    const issued = tokens.issue(form.scope ?? DEFAULT_SCOPE);
    res.set('Cache-Control', 'no-store').json({
      access_token: issued.accessToken,
      token_type: 'Bearer',
      expires_in: issued.expiresIn,
      scope: issued.scope,
    });
  });
  return router;
}

function authenticateClient(req: Request, form: Record<string, string | undefined>, tokens: TokenService, audience: string): string | undefined {
  const basic = /^Basic\s+(.+)$/i.exec(req.get('authorization') ?? '');
  if (basic) {
    const decoded = Buffer.from(basic[1]!, 'base64').toString('utf8');
    const colon = decoded.indexOf(':');
    // RFC 6749 §2.3.1: id and secret are form-urlencoded before Basic encoding.
    const id = decodeURIComponent(decoded.slice(0, colon));
    const secret = decodeURIComponent(decoded.slice(colon + 1));
    return colon > 0 && tokens.checkClient(id, secret) ? undefined : 'unknown client or wrong secret';
  }
  if (form.client_assertion) {
    if (form.client_assertion_type !== JWT_BEARER_TYPE) return `client_assertion_type must be ${JWT_BEARER_TYPE}`;
    return verifyClientAssertion(form.client_assertion, { clientId: tokens.clientId, secret: tokens.secretBytes(), audience });
  }
  if (form.client_id && form.client_secret) {
    return tokens.checkClient(form.client_id, form.client_secret) ? undefined : 'unknown client or wrong secret';
  }
  return 'no client authentication given (client_secret, HTTP Basic or client_assertion)';
}

/** Every FHIR call but the CapabilityStatement needs a live bearer token. */
export function requireBearer(tokens: TokenService): RequestHandler {
  return (req, res, next) => {
    const m = /^Bearer\s+(\S+)$/i.exec(req.get('authorization') ?? '');
    if (m && tokens.isValid(m[1]!)) return next();
    res.set('WWW-Authenticate', `Bearer realm="mock-ehr", error="invalid_token"`);
    next(FhirError.of(401, 'login', m ? 'the bearer token is unknown or has expired' : 'an Authorization: Bearer token is required'));
  };
}
