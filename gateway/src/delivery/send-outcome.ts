import type { OperationOutcome } from './fhir-types';

/**
 * What one attempt to hand a message to a destination came to. The outbox acts on the kind:
 * delivered → done; rejected → failed at once (the message is wrong, retrying cannot help);
 * auth → destination configuration alert, retried later; retryable → backoff and retry.
 */
export type SendOutcome =
  | { kind: 'delivered'; httpStatus: number | null; serverId: string | null; created: boolean; response: unknown }
  | { kind: 'rejected'; httpStatus: number | null; response: unknown; detail: string }
  | { kind: 'auth'; httpStatus: number; response: unknown; detail: string }
  | { kind: 'retryable'; httpStatus: number | null; response: unknown; detail: string; retryAfterMs?: number };

/** FHIR R4 http.html: 408/429 and 5xx are transient; other 4xx say the request itself is wrong. */
export function classifyHttpStatus(status: number): 'delivered' | 'rejected' | 'auth' | 'retryable' {
  if (status >= 200 && status < 300) return 'delivered';
  if (status === 401 || status === 403) return 'auth';
  if (status === 408 || status === 429 || status >= 500) return 'retryable';
  return 'rejected';
}

/** Retry-After as seconds or an HTTP date (RFC 9110 §10.2.3), in ms from now. */
export function parseRetryAfter(value: string | null | undefined, now = Date.now()): number | undefined {
  if (!value) return undefined;
  if (/^\d+$/.test(value.trim())) return Number(value.trim()) * 1000;
  const at = Date.parse(value);
  return Number.isFinite(at) ? Math.max(0, at - now) : undefined;
}

export function isOperationOutcome(x: unknown): x is OperationOutcome {
  return !!x && typeof x === 'object' && (x as { resourceType?: unknown }).resourceType === 'OperationOutcome';
}

/** One line from an OperationOutcome for lists and mail; the full resource is kept beside it. */
export function outcomeSummary(x: unknown): string | undefined {
  if (!isOperationOutcome(x)) return undefined;
  return x.issue.map((i) => `${i.severity} ${i.code}${i.diagnostics ? `: ${i.diagnostics}` : i.details?.text ? `: ${i.details.text}` : ''}`).join('; ');
}
