/**
 * The EHR's FHIR API as the outbox sees it: an OAuth2 client-credentials token (SMART
 * backend-services style), fhir-kit-client with the bearer token, and every answer turned into a
 * SendOutcome. Conditional create (If-None-Exist) makes every send idempotent.
 */
import { Client } from 'fhir-kit-client';
import type { Bundle, Device, Observation } from './fhir-types';
import { parseResourceLocation } from './fhir-location';
import { classifyHttpStatus, parseRetryAfter, type SendOutcome } from './send-outcome';

export interface EhrSettings {
  fhirBaseUrl: string;
  tokenUrl: string;
  clientId: string;
  clientSecret: string;
  requestTimeoutMs: number;
}

interface HttpError extends Error {
  response?: { status: number; data: unknown };
  config?: { headers?: Headers };
}

export class TokenError extends Error {
  constructor(readonly outcome: SendOutcome) {
    super(`token request failed: ${'detail' in outcome ? outcome.detail : outcome.kind}`);
  }
}

/** RFC 6749 §4.4 client credentials; the token is reused until shortly before it expires. */
export class TokenProvider {
  private token: { value: string; expiresAt: number } | undefined;
  private pending: Promise<string> | undefined;

  constructor(private readonly s: EhrSettings) {}

  invalidate(): void {
    this.token = undefined;
  }

  async get(): Promise<string> {
    if (this.token && this.token.expiresAt > Date.now()) return this.token.value;
    return (this.pending ??= this.fetchToken().finally(() => (this.pending = undefined)));
  }

  private async fetchToken(): Promise<string> {
    let res: Response;
    try {
      res = await fetch(this.s.tokenUrl, {
        method: 'POST',
        headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'application/json' },
        body: new URLSearchParams({ grant_type: 'client_credentials', client_id: this.s.clientId, client_secret: this.s.clientSecret }),
        signal: AbortSignal.timeout(this.s.requestTimeoutMs),
        // The client secret goes to the configured token URL only: a redirect is never followed.
        redirect: 'manual',
      });
    } catch (err) {
      throw new TokenError({ kind: 'retryable', httpStatus: null, response: null, detail: `token endpoint unreachable: ${errorText(err)}` });
    }
    if (res.status >= 300 && res.status < 400) {
      throw new TokenError({
        kind: 'auth',
        httpStatus: res.status,
        response: null,
        detail: `token endpoint answered ${res.status} (a redirect, not followed: fix the token URL)`,
      });
    }
    const text = await res.text();
    const body = safeJson(text);
    if (!res.ok) {
      const kind = res.status === 400 || res.status === 401 || res.status === 403 ? 'auth' : classifyHttpStatus(res.status);
      const detail = `token endpoint answered ${res.status}${body && typeof body === 'object' && 'error' in body ? ` (${String((body as { error: unknown }).error)})` : ''}`;
      if (kind === 'auth') throw new TokenError({ kind: 'auth', httpStatus: res.status, response: body, detail });
      throw new TokenError({
        kind: 'retryable',
        httpStatus: res.status,
        response: body,
        detail,
        retryAfterMs: parseRetryAfter(res.headers.get('retry-after')),
      });
    }
    const { access_token: value, expires_in: expiresIn } = (body ?? {}) as { access_token?: string; expires_in?: number };
    if (!value) throw new TokenError({ kind: 'auth', httpStatus: res.status, response: body, detail: 'token endpoint gave no access_token' });
    // Renew 30 s early so a token never expires in flight.
    this.token = { value, expiresAt: Date.now() + Math.max(0, (expiresIn ?? 300) - 30) * 1000 };
    return value;
  }
}

function safeJson(text: string): unknown {
  try {
    return text ? JSON.parse(text) : null;
  } catch {
    return text;
  }
}

export function errorText(err: unknown): string {
  const e = err as { name?: string; message?: string; cause?: { code?: string; message?: string } };
  if (e?.name === 'TimeoutError' || e?.name === 'AbortError') return 'no answer before the timeout';
  return e?.cause?.code ?? e?.cause?.message ?? e?.message ?? String(err);
}

/** Turns whatever fhir-kit-client threw into a SendOutcome. */
export function outcomeOfError(err: unknown): SendOutcome {
  if (err instanceof TokenError) return err.outcome;
  const e = err as HttpError;
  if (e?.response && typeof e.response.status === 'number') {
    const status = e.response.status;
    const kind = classifyHttpStatus(status);
    const detail = `the EHR answered ${status}`;
    if (kind === 'auth') return { kind, httpStatus: status, response: e.response.data, detail };
    if (kind === 'retryable')
      return { kind, httpStatus: status, response: e.response.data, detail, retryAfterMs: parseRetryAfter(e.config?.headers?.get?.('retry-after')) };
    if (kind === 'delivered') return { kind, httpStatus: status, serverId: null, created: false, response: e.response.data };
    return { kind, httpStatus: status, response: e.response.data, detail };
  }
  const timeout = (e as { name?: string })?.name === 'TimeoutError' || (e as { name?: string })?.name === 'AbortError';
  return { kind: 'retryable', httpStatus: null, response: null, detail: timeout ? 'no answer before the timeout' : `connection failed: ${errorText(err)}` };
}

export class EhrClient {
  readonly tokens: TokenProvider;
  private readonly client: Client;

  constructor(private readonly s: EhrSettings) {
    this.tokens = new TokenProvider(s);
    this.client = new Client({ baseUrl: s.fhirBaseUrl });
  }

  /** Runs a call with a fresh bearer token; on 401 the token is renewed once and the call repeated. */
  private async authed<T>(call: (headers: Record<string, string>, signal: AbortSignal) => Promise<T>): Promise<T> {
    for (let round = 0; ; round++) {
      const token = await this.tokens.get();
      try {
        return await call({ authorization: `Bearer ${token}` }, AbortSignal.timeout(this.s.requestTimeoutMs));
      } catch (err) {
        if (round === 0 && (err as HttpError)?.response?.status === 401) {
          this.tokens.invalidate();
          continue;
        }
        throw err;
      }
    }
  }

  async search(resourceType: string, searchParams: Record<string, string>): Promise<Bundle> {
    return (await this.authed((headers, signal) => this.client.search({ resourceType, searchParams, options: { headers, signal } }))) as unknown as Bundle;
  }

  async read(resourceType: string, id: string): Promise<Record<string, unknown>> {
    return (await this.authed((headers, signal) => this.client.read({ resourceType, id, options: { headers, signal } }))) as Record<string, unknown>;
  }

  /** Server ids of the Observations holding an identifier (the fallback when no Location was given). */
  async findObservationIds(identifier: { system: string; value: string }): Promise<string[]> {
    const b = await this.search('Observation', { identifier: `${identifier.system}|${identifier.value}` });
    return (b.entry ?? []).map((e) => e.resource?.id).filter((x): x is string => typeof x === 'string');
  }

  /** Conditional update on the identifier: creates the Device the first time, updates it after. */
  async upsertDevice(device: Device, identifier: { system: string; value: string }): Promise<string> {
    const res = await this.authed((headers, signal) =>
      this.client.update({
        resourceType: 'Device',
        searchParams: { identifier: `${identifier.system}|${identifier.value}` },
        body: device as unknown as Record<string, unknown> & { resourceType: string },
        options: { headers, signal },
      }),
    );
    return String((res as { id?: unknown }).id);
  }

  /** One Observation, conditional create (FHIR R4 http.html#ccreate: 201 new, 200 already there). */
  async createObservation(resource: Observation, ifNoneExist: string): Promise<SendOutcome> {
    try {
      const res: Record<string, unknown> = await this.authed((headers, signal) =>
        this.client.create({
          resourceType: 'Observation',
          body: resource as unknown as Record<string, unknown> & { resourceType: string },
          options: { headers: { ...headers, 'if-none-exist': ifNoneExist }, signal },
        }),
      );
      const http = Client.httpFor(res as never).response;
      const status = http?.status ?? null;
      // The id from the body when the server returns one, else from the Location header (any form).
      const serverId = typeof res.id === 'string' ? res.id : (parseResourceLocation(http?.headers?.get('location'), 'Observation')?.id ?? null);
      return { kind: 'delivered', httpStatus: status, serverId, created: status === 201, response: null };
    } catch (err) {
      return outcomeOfError(err);
    }
  }

  /** Plain update by id, for the entered-in-error amendment. */
  async updateObservation(resource: Observation & { id: string }): Promise<SendOutcome> {
    try {
      const res = await this.authed((headers, signal) =>
        this.client.update({
          resourceType: 'Observation',
          id: resource.id,
          body: resource as unknown as Record<string, unknown> & { resourceType: string },
          options: { headers, signal },
        }),
      );
      const status = Client.httpFor(res).response?.status ?? null;
      return { kind: 'delivered', httpStatus: status, serverId: resource.id, created: false, response: null };
    } catch (err) {
      return outcomeOfError(err);
    }
  }

  /** A transaction Bundle (all or nothing); the caller reads a status per entry from the answer. */
  async transaction(bundle: Bundle): Promise<{ ok: true; bundle: Bundle; httpStatus: number | null } | { ok: false; outcome: SendOutcome }> {
    try {
      const res = await this.authed((headers, signal) =>
        this.client.transaction({ body: bundle as unknown as Record<string, unknown> & { resourceType: string }, options: { headers, signal } }),
      );
      return { ok: true, bundle: res as unknown as Bundle, httpStatus: Client.httpFor(res).response?.status ?? null };
    } catch (err) {
      return { ok: false, outcome: outcomeOfError(err) };
    }
  }
}
