import { describe, expect, it } from 'vitest';
import { backoffDelay, DEFAULT_RETRY_POLICY, nextDelay, parseRetryAfter } from './retry-policy';

describe('Retry-After parsing (RFC 9110 §10.2.3)', () => {
  it('reads delay-seconds, as in the RFC example "Retry-After: 120"', () => {
    expect(parseRetryAfter('120')).toBe(120_000);
  });
  it('reads an HTTP-date, as in the RFC example "Fri, 31 Dec 1999 23:59:59 GMT"', () => {
    const now = Date.parse('1999-12-31T23:59:00Z');
    expect(parseRetryAfter('Fri, 31 Dec 1999 23:59:59 GMT', now)).toBe(59_000);
  });
  it('ignores absent or unreadable values', () => {
    expect(parseRetryAfter(null)).toBeUndefined();
    expect(parseRetryAfter('soon')).toBeUndefined();
  });
});

describe('exponential backoff with full jitter (Brooker, AWS Architecture Blog 2015)', () => {
  const p = { ...DEFAULT_RETRY_POLICY, baseDelayMs: 100, maxDelayMs: 1000, minDelayMs: 0 };
  it('draws from [0, min(cap, base·2^(attempt−1))]', () => {
    expect([1, 2, 3, 4, 5, 6].map((a) => backoffDelay(p, a, () => 1))).toEqual([100, 200, 400, 800, 1000, 1000]);
    expect(backoffDelay(p, 3, () => 0.25)).toBe(100);
  });
  it('lets a Retry-After win over the backoff, capped at maxRetryAfterMs', () => {
    expect(nextDelay(p, 1, 5000, () => 1)).toBe(5000);
    expect(nextDelay({ ...p, maxRetryAfterMs: 2000 }, 1, 5000, () => 1)).toBe(2000);
  });
});
