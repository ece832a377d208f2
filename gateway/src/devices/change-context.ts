import type { Principal } from '../auth/principal';

/** Who asks for a change, for the audit log. */
export interface ChangeBy {
  principal: Principal | undefined;
  requestId?: string;
}

/** MariaDB duplicate-key error (ER_DUP_ENTRY). */
export function isDuplicateKey(err: unknown): boolean {
  const e = err as { errno?: number; code?: string; driverError?: { errno?: number } };
  return e?.errno === 1062 || e?.code === 'ER_DUP_ENTRY' || e?.driverError?.errno === 1062;
}

/** MariaDB foreign-key violation on delete (ER_ROW_IS_REFERENCED_2). */
export function isReferenced(err: unknown): boolean {
  const e = err as { errno?: number; driverError?: { errno?: number } };
  return e?.errno === 1451 || e?.driverError?.errno === 1451;
}
