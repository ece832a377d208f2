import type { DataSource } from 'typeorm';
import type { Config } from '../config/schema';

type Throttle = Config['auth']['throttle'];

/** The account subject: the username as typed, case-folded, so unknown names are throttled like real ones. */
export const accountSubject = (username: string) => username.trim().toLowerCase().slice(0, 128);

/** When the next try is allowed for this account or source (null: now). */
export async function blockedUntil(ds: DataSource, username: string, source: string): Promise<Date | null> {
  const rows = (await ds.query(
    `SELECT MAX(blocked_until) AS until FROM sign_in_throttle
      WHERE ((scope = 'account' AND subject = ?) OR (scope = 'source' AND subject = ?)) AND blocked_until > NOW(3)`,
    [accountSubject(username), source.slice(0, 128)],
  )) as { until: Date | string | null }[];
  const until = rows[0]?.until;
  return until ? new Date(until) : null;
}

/**
 * Counts one failure for the account and one for the source, atomically in the database (parallel
 * guesses each count). Past the free failures, each further one doubles the wait before the next
 * try: base · 2^(failures − free − 1) s, capped. A quiet `forgetMinutes` starts the count again.
 * A growing wait, not a lock: nobody can shut an on-call admin out for longer than the account cap.
 */
export async function countFailure(ds: DataSource, t: Throttle, username: string, source: string): Promise<void> {
  const upsert = `INSERT INTO sign_in_throttle (scope, subject, failures, last_failure_at, blocked_until)
      VALUES (?, ?, 1, NOW(3), NULL)
    ON DUPLICATE KEY UPDATE
      failures = IF(last_failure_at < NOW(3) - INTERVAL ? MINUTE, 1, failures + 1),
      last_failure_at = NOW(3),
      blocked_until = IF(failures > ?, NOW(3) + INTERVAL LEAST(?, ? * POW(2, LEAST(failures - ? - 1, 30))) SECOND, NULL)`;
  const run = (scope: 'account' | 'source', subject: string, free: number, max: number) =>
    ds.query(upsert, [scope, subject, t.forgetMinutes, free, max, t.baseDelaySeconds, free]);
  await run('account', accountSubject(username), t.accountFreeFailures, t.accountMaxDelaySeconds);
  await run('source', source.slice(0, 128), t.sourceFreeFailures, t.sourceMaxDelaySeconds);
}

/** A good sign-in clears the account's count (not the source's: one known password must not reset a guessing source). */
export async function clearAccount(ds: DataSource, username: string): Promise<void> {
  await ds.query(`DELETE FROM sign_in_throttle WHERE scope = 'account' AND subject = ?`, [accountSubject(username)]);
}
