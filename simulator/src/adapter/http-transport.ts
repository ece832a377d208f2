import type { IngestBatch } from '@ebbgate/shared';
import { parseRetryAfter } from './retry-policy';
import type { BatchTransport, SendOutcome } from './transport';

export interface HttpTransportOptions {
  /** Gateway base URL, e.g. `http://127.0.0.1:8480`. */
  gatewayUrl: string;
  /** The monitor's API key (shown once when it was issued), by monitor identifier. */
  apiKey: (monitorId: string) => string | undefined;
  /** Per-request timeout, ms (default 15 s). */
  timeoutMs?: number;
  fetch?: typeof fetch;
}

export const INGEST_PATH = '/api/v1/ingest/batches';

/** Status codes that mean "try again later": the gateway or something in front of it is busy or down. */
const TRANSIENT = new Set([408, 425, 429, 500, 502, 503, 504]);

/** POST /api/v1/ingest/batches with `Authorization: Bearer <monitor API key>`. */
export function httpTransport(opts: HttpTransportOptions): BatchTransport {
  const url = new URL(INGEST_PATH, opts.gatewayUrl).toString();
  const doFetch = opts.fetch ?? fetch;
  return {
    name: 'http',
    async send(batch: IngestBatch): Promise<SendOutcome> {
      const key = opts.apiKey(batch.monitorId);
      if (!key) return { kind: 'rejected', reason: `no API key configured for monitor ${batch.monitorId}` };
      let res: Response;
      try {
        res = await doFetch(url, {
          method: 'POST',
          headers: { 'content-type': 'application/json', authorization: `Bearer ${key}`, accept: 'application/json, application/problem+json' },
          body: JSON.stringify(batch),
          signal: AbortSignal.timeout(opts.timeoutMs ?? 15_000),
        });
      } catch (err) {
        return { kind: 'retry', reason: `gateway unreachable: ${describe(err)}` };
      }
      const text = await res.text().catch(() => '');
      const answer = parseJson(text);
      if (res.status === 202 || res.status === 200) return { kind: 'accepted', status: res.status, repeat: res.status === 200 };
      if (TRANSIENT.has(res.status)) {
        return { kind: 'retry', status: res.status, reason: problemText(res.status, answer, text), retryAfterMs: parseRetryAfter(res.headers.get('retry-after')) };
      }
      // 409 (same batch id, other content), 400/422 (bad fields), 401/403 (key), 413 (too big) …
      return { kind: 'rejected', status: res.status, reason: problemText(res.status, answer, text), answer: answer ?? text };
    },
  };
}

function parseJson(text: string): unknown {
  try {
    return text ? JSON.parse(text) : undefined;
  } catch {
    return undefined;
  }
}

/** A one-line reason from RFC 9457 problem details (title, detail, each named field). */
function problemText(status: number, answer: unknown, text: string): string {
  if (answer && typeof answer === 'object') {
    const p = answer as { title?: string; detail?: string; errors?: { path?: string; message?: string }[] };
    const fields = (p.errors ?? []).map((e) => `${e.path ?? '?'}: ${e.message ?? ''}`).join('; ');
    return [`HTTP ${status}`, p.title, p.detail, fields].filter(Boolean).join(' — ');
  }
  return `HTTP ${status}${text ? ` — ${text.slice(0, 200)}` : ''}`;
}

function describe(err: unknown): string {
  if (err instanceof Error) {
    const cause = (err as { cause?: { code?: string; message?: string } }).cause;
    return cause?.code ?? cause?.message ?? err.name + ': ' + err.message;
  }
  return String(err);
}
