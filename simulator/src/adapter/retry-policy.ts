/**
 * When to try a batch again. Exponential backoff with "full jitter" (delay drawn uniformly from
 * [0, min(cap, base · 2^attempt)]; Brooker, "Exponential Backoff And Jitter", AWS Architecture
 * Blog 2015) so a ward of adapters that lost the gateway together does not come back in lockstep.
 */
export interface RetryPolicy {
  /** First backoff ceiling, ms. */
  baseDelayMs: number;
  /** Largest backoff ceiling, ms. */
  maxDelayMs: number;
  /** Longest Retry-After the client is willing to wait, ms (a longer one is cut to this). */
  maxRetryAfterMs: number;
  /** Smallest wait between attempts, ms, so a jitter draw of 0 does not spin. */
  minDelayMs: number;
}

export const DEFAULT_RETRY_POLICY: RetryPolicy = { baseDelayMs: 500, maxDelayMs: 30_000, maxRetryAfterMs: 300_000, minDelayMs: 50 };

/** Backoff before attempt number `attempt + 1` (attempt counts failures so far, from 1). */
export function backoffDelay(policy: RetryPolicy, attempt: number, random: () => number = Math.random): number {
  const ceiling = Math.min(policy.maxDelayMs, policy.baseDelayMs * 2 ** Math.max(0, attempt - 1));
  return Math.max(policy.minDelayMs, Math.round(random() * ceiling));
}

/**
 * Parses a Retry-After header value (RFC 9110 §10.2.3: delay-seconds or an HTTP-date) into ms
 * from `now`; undefined when absent or unreadable.
 */
export function parseRetryAfter(value: string | null | undefined, now: number = Date.now()): number | undefined {
  if (value === null || value === undefined) return undefined;
  const v = value.trim();
  if (/^\d+$/.test(v)) return Number(v) * 1000;
  const at = Date.parse(v);
  if (Number.isNaN(at)) return undefined;
  return Math.max(0, at - now);
}

/** The wait the client will honour: the server's Retry-After when given (capped), else backoff. */
export function nextDelay(policy: RetryPolicy, attempt: number, retryAfterMs: number | undefined, random?: () => number): number {
  if (retryAfterMs !== undefined) return Math.min(policy.maxRetryAfterMs, Math.max(policy.minDelayMs, retryAfterMs));
  return backoffDelay(policy, attempt, random);
}
