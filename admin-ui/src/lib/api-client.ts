import type { Problem } from '@ebbgate/shared';

/** A failed API call, carrying the RFC 9457 problem details the gateway answered with. */
export class ApiError extends Error {
  readonly status: number;
  readonly problem: Problem;
  /** The answer's Retry-After in seconds (429, 503), when it sent one. */
  readonly retryAfterSeconds: number | undefined;

  constructor(problem: Problem, retryAfterSeconds?: number) {
    super(problem.detail ?? problem.title);
    this.name = 'ApiError';
    this.status = problem.status;
    this.problem = problem;
    this.retryAfterSeconds = retryAfterSeconds;
  }

  /** Field path → message, for showing server-side validation beside the form field. */
  fieldErrors(): Record<string, string> {
    const out: Record<string, string> = {};
    for (const e of this.problem.errors ?? []) out[e.path.replace(/^body\./, '')] = e.message;
    return out;
  }
}

export type Query = Record<string, string | number | boolean | undefined | null>;

export interface RequestOptions {
  method?: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  query?: Query;
  /** JSON body; ignored when `form` is set. */
  body?: unknown;
  form?: FormData;
  signal?: AbortSignal;
}

let csrfToken: string | null = null;
const unauthorizedListeners = new Set<() => void>();

/** Remembered from the session answer; falls back to the readable `ebbgate_csrf` cookie. */
export function setCsrfToken(token: string | null): void {
  csrfToken = token;
}

/** Called whenever the gateway says the session is gone (401), so the shell can show sign-in. */
export function onUnauthorized(listener: () => void): () => void {
  unauthorizedListeners.add(listener);
  return () => unauthorizedListeners.delete(listener);
}

function readCookie(name: string): string | null {
  if (typeof document === 'undefined') return null;
  const hit = document.cookie.split('; ').find((c) => c.startsWith(`${name}=`));
  return hit ? decodeURIComponent(hit.slice(name.length + 1)) : null;
}

export function buildUrl(path: string, query?: Query): string {
  const url = path.startsWith('/api/') || path.startsWith('/healthz') || path.startsWith('/readyz') ? path : `/api/v1${path}`;
  if (!query) return url;
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) {
    if (v === undefined || v === null || v === '') continue;
    params.set(k, String(v));
  }
  const qs = params.toString();
  return qs ? `${url}?${qs}` : url;
}

/** Retry-After as delay-seconds or an HTTP date (RFC 9110 §10.2.3), in whole seconds from now. */
export function retryAfterSeconds(value: string | null, now = Date.now()): number | undefined {
  if (!value) return undefined;
  const v = value.trim();
  if (/^\d+$/.test(v)) return Number(v);
  const at = Date.parse(v);
  return Number.isFinite(at) ? Math.max(0, Math.ceil((at - now) / 1000)) : undefined;
}

async function toProblem(res: Response): Promise<Problem> {
  const text = await res.text().catch(() => '');
  try {
    const parsed = JSON.parse(text) as Partial<Problem>;
    if (parsed && typeof parsed === 'object' && typeof parsed.title === 'string') {
      return { type: parsed.type ?? 'about:blank', status: parsed.status ?? res.status, ...parsed } as Problem;
    }
  } catch {
    // Not JSON (a proxy error page, say): fall through to a generic problem.
  }
  return { type: 'about:blank', title: res.statusText || 'Request failed', status: res.status, detail: text.slice(0, 300) || undefined };
}

/** The one fetch wrapper: same-origin cookies, CSRF header on mutations, problem details on failure. */
export async function apiRequest<T>(path: string, opts: RequestOptions = {}): Promise<T> {
  const method = opts.method ?? 'GET';
  const headers: Record<string, string> = { Accept: 'application/json, application/problem+json' };
  if (method !== 'GET') {
    const token = csrfToken ?? readCookie('ebbgate_csrf');
    if (token) headers['X-CSRF-Token'] = token;
  }
  let body: BodyInit | undefined;
  if (opts.form) body = opts.form;
  else if (opts.body !== undefined) {
    headers['Content-Type'] = 'application/json';
    body = JSON.stringify(opts.body);
  }
  let res: Response;
  try {
    res = await fetch(buildUrl(path, opts.query), { method, headers, body, credentials: 'same-origin', signal: opts.signal });
  } catch (err) {
    if ((err as Error).name === 'AbortError') throw err;
    throw new ApiError({ type: 'about:blank', title: 'The gateway could not be reached', status: 0, detail: (err as Error).message });
  }
  if (!res.ok) {
    const problem = await toProblem(res);
    if (res.status === 401 && !path.startsWith('/auth/')) for (const l of unauthorizedListeners) l();
    throw new ApiError(problem, retryAfterSeconds(res.headers.get('Retry-After')));
  }
  if (res.status === 204) return undefined as T;
  const type = res.headers.get('content-type') ?? '';
  if (type.includes('json')) return (await res.json()) as T;
  return (await res.text()) as T;
}

export const api = {
  get: <T>(path: string, query?: Query, signal?: AbortSignal) => apiRequest<T>(path, { query, signal }),
  post: <T>(path: string, body?: unknown) => apiRequest<T>(path, { method: 'POST', body }),
  put: <T>(path: string, body?: unknown) => apiRequest<T>(path, { method: 'PUT', body }),
  patch: <T>(path: string, body?: unknown) => apiRequest<T>(path, { method: 'PATCH', body }),
  delete: <T>(path: string) => apiRequest<T>(path, { method: 'DELETE' }),
  upload: <T>(path: string, form: FormData) => apiRequest<T>(path, { method: 'POST', form }),
};

/** A readable sentence for any error thrown by a query or mutation. */
export function errorMessage(err: unknown): string {
  if (err instanceof ApiError) {
    const d = err.problem.detail && err.problem.detail !== err.problem.title ? `: ${err.problem.detail}` : '';
    return `${err.problem.title}${d}`;
  }
  if (err instanceof Error) return err.message;
  return 'Something went wrong';
}
