/**
 * Exponential backoff with "equal jitter": half the exponential delay is fixed, half random, so
 * retries spread out without ever collapsing to zero (common practice for retrying HTTP clients).
 */
export interface BackoffSettings {
  baseMs: number;
  maxMs: number;
}

export function backoffDelayMs(tries: number, s: BackoffSettings, random: () => number = Math.random): number {
  const exp = Math.min(s.maxMs, s.baseMs * 2 ** Math.max(0, tries - 1));
  return Math.round(exp / 2 + random() * (exp / 2));
}
