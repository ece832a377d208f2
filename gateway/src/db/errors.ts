/**
 * MariaDB errors the services handle, by server error number (MariaDB error codes reference:
 * ER_DUP_ENTRY 1062, ER_ROW_IS_REFERENCED_2 1451, ER_LOCK_WAIT_TIMEOUT 1205, ER_LOCK_DEADLOCK 1213).
 * The driver's error may arrive bare or wrapped by TypeORM (QueryFailedError.driverError).
 */
type DbError = { errno?: number; code?: string; driverError?: { errno?: number } };

const errnoOf = (err: unknown): number | undefined => {
  const e = err as DbError | undefined;
  return e?.driverError?.errno ?? e?.errno;
};

/** Duplicate key (ER_DUP_ENTRY): a unique column already holds the value. */
export function isDuplicateKey(err: unknown): boolean {
  const e = err as DbError | undefined;
  return e?.errno === 1062 || e?.code === 'ER_DUP_ENTRY' || e?.driverError?.errno === 1062;
}

/** Foreign-key violation on delete (ER_ROW_IS_REFERENCED_2): other rows still point at this one. */
export function isReferenced(err: unknown): boolean {
  const e = err as DbError | undefined;
  return e?.errno === 1451 || e?.driverError?.errno === 1451;
}

/** Deadlock or lock-wait timeout: the transaction was rolled back and may simply be run again. */
export function isRetryableLockError(err: unknown): boolean {
  const n = errnoOf(err);
  return n === 1213 || n === 1205;
}
