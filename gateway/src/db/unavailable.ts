/**
 * Errors that mean "the database cannot serve this right now", not "this request is wrong":
 * the pool's wait queue is full (mysql2 "Queue limit reached."), no connection could be made or
 * it was lost, or the server has no connection slot left (ER_CON_COUNT_ERROR 1040). HTTP answers
 * these with 503 and Retry-After, so callers come back instead of treating them as a fault.
 */
const CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ETIMEDOUT',
  'EHOSTUNREACH',
  'PROTOCOL_CONNECTION_LOST',
  'PROTOCOL_SEQUENCE_TIMEOUT',
  'POOL_CLOSED',
  'ER_CON_COUNT_ERROR',
]);

export function isDatabaseUnavailable(err: unknown): boolean {
  const e = err as { code?: unknown; errno?: unknown; message?: unknown; driverError?: unknown } | undefined;
  if (!e || typeof e !== 'object') return false;
  if (typeof e.code === 'string' && CODES.has(e.code)) return true;
  if (e.errno === 1040) return true;
  if (typeof e.message === 'string' && /^(Queue limit reached\.?|Pool is closed\.?)$/.test(e.message)) return true;
  return e.driverError !== undefined && e.driverError !== err ? isDatabaseUnavailable(e.driverError) : false;
}
