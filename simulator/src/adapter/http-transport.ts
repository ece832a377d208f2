import http from 'node:http';
import https from 'node:https';
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
  /** Kept-alive connections to the gateway at most (default 64); further requests wait their turn. */
  maxSockets?: number;
}

interface RawAnswer {
  status: number;
  retryAfter: string | undefined;
  text: string;
}

/** One POST over node:http(s) with a keep-alive agent (far fewer sockets than one per monitor). */
function post(url: URL, agent: http.Agent, headers: Record<string, string>, body: string, timeoutMs: number): Promise<RawAnswer> {
  return new Promise((resolve, reject) => {
    const lib = url.protocol === 'https:' ? https : http;
    const req = lib.request(url, { method: 'POST', agent, headers: { ...headers, 'content-length': String(Buffer.byteLength(body)) } }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, retryAfter: res.headers['retry-after'], text: Buffer.concat(chunks).toString('utf8') }));
      res.on('error', reject);
    });
    req.setTimeout(timeoutMs, () => req.destroy(Object.assign(new Error(`no answer within ${timeoutMs} ms`), { code: 'ETIMEDOUT' })));
    req.on('error', reject);
    req.end(body);
  });
}

export const INGEST_PATH = '/api/v1/ingest/batches';

/** Status codes that mean "try again later": the gateway or something in front of it is busy or down. */
const TRANSIENT = new Set([408, 425, 429, 500, 502, 503, 504]);

/** POST /api/v1/ingest/batches with `Authorization: Bearer <monitor API key>`. */
export function httpTransport(opts: HttpTransportOptions): BatchTransport {
  const url = new URL(INGEST_PATH, opts.gatewayUrl);
  const Agent = url.protocol === 'https:' ? https.Agent : http.Agent;
  const agent = new Agent({ keepAlive: true, maxSockets: opts.maxSockets ?? 64 });
  return {
    name: 'http',
    close: async () => agent.destroy(),
    async send(batch: IngestBatch): Promise<SendOutcome> {
      const key = opts.apiKey(batch.monitorId);
      if (!key) return { kind: 'rejected', reason: `no API key configured for monitor ${batch.monitorId}` };
      let res: RawAnswer;
      try {
        const headers = { 'content-type': 'application/json', authorization: `Bearer ${key}`, accept: 'application/json, application/problem+json' };
        res = await post(url, agent, headers, JSON.stringify(batch), opts.timeoutMs ?? 15_000);
      } catch (err) {
        return { kind: 'retry', reason: `gateway unreachable: ${describe(err)}` };
      }
      const text = res.text;
      const answer = parseJson(text);
      if (res.status === 202 || res.status === 200) return { kind: 'accepted', status: res.status, repeat: res.status === 200 };
      if (TRANSIENT.has(res.status)) {
        return { kind: 'retry', status: res.status, reason: problemText(res.status, answer, text), retryAfterMs: parseRetryAfter(res.retryAfter) };
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
  if (err instanceof Error) return (err as NodeJS.ErrnoException).code ?? err.message;
  return String(err);
}
