/**
 * Runs a database transaction again when the server rolled it back for a conflict: a deadlock or
 * lock-wait timeout on one server, or, on a Galera cluster, a certification failure. Row locks
 * are local to a Galera node, so two claims that race through different nodes both succeed
 * locally and the later one fails at commit; MariaDB reports that as ER_LOCK_DEADLOCK (1213)
 * ("MariaDB Galera Cluster - Known Limitations", MariaDB Knowledge Base). A node that has left
 * the primary component answers ER_UNKNOWN_COM_ERROR (1047, "WSREP has not yet prepared node for
 * application use") until HAProxy moves the connection to another node: retried too.
 * Only for work whose side effects are all inside the transaction (claims, state changes).
 */
import type { DataSource, EntityManager } from 'typeorm';
import { isRetryableLockError } from './errors';

type IsolationLevel = 'READ UNCOMMITTED' | 'READ COMMITTED' | 'REPEATABLE READ' | 'SERIALIZABLE';

const errnoOf = (err: unknown): number | undefined => {
  const e = err as { errno?: number; driverError?: { errno?: number } } | undefined;
  return e?.driverError?.errno ?? e?.errno;
};

/** A conflict (deadlock, lock wait, Galera certification failure) or a node not ready: safe to run again. */
export function isConflictRetryable(err: unknown): boolean {
  return isRetryableLockError(err) || errnoOf(err) === 1047;
}

export interface RetryOptions {
  attempts?: number;
  isolation?: IsolationLevel;
  /** Called before each new attempt (metrics, logs). */
  onRetry?: (attempt: number, err: unknown) => void;
}

export async function transactionWithRetry<T>(ds: DataSource, work: (m: EntityManager) => Promise<T>, opts: RetryOptions = {}): Promise<T> {
  const attempts = opts.attempts ?? 5;
  for (let attempt = 1; ; attempt++) {
    try {
      return opts.isolation ? await ds.transaction(opts.isolation, work) : await ds.transaction(work);
    } catch (err) {
      if (attempt >= attempts || !isConflictRetryable(err)) throw err;
      opts.onRetry?.(attempt, err);
      // Jittered backoff so the two racing claims do not collide again.
      await new Promise((r) => setTimeout(r, 5 * 2 ** attempt + Math.random() * 20));
    }
  }
}
