import type { Overview } from '@ebbgate/shared';
import type { AppContext } from '../app-context';

const WINDOW_MINUTES = 60;
/** A monitor counts as live when it sent something this recently. */
const LIVE_SECONDS = 60;

type Row = Record<string, string | number | Date | null>;

const n = (v: unknown) => Number(v ?? 0);

/** Per-minute buckets, oldest first, zero-filled, from rows of (minute, key, count). */
function series<K extends string>(rows: Row[], keys: readonly K[], mapKey: (v: string) => K | undefined, now: Date) {
  const start = Math.floor(now.getTime() / 60_000) - WINDOW_MINUTES + 1;
  const buckets = Array.from(
    { length: WINDOW_MINUTES },
    (_, i) => ({ t: new Date((start + i) * 60_000).toISOString(), ...Object.fromEntries(keys.map((k) => [k, 0])) }) as { t: string } & Record<K, number>,
  );
  for (const r of rows) {
    const idx = Math.floor(new Date(r.minute as string).getTime() / 60_000) - start;
    const key = mapKey(String(r.k));
    if (idx >= 0 && idx < WINDOW_MINUTES && key) (buckets[idx] as Record<K, number>)[key] += n(r.c);
  }
  return buckets;
}

const minuteExpr = (col: string) => `DATE_FORMAT(${col}, '%Y-%m-%dT%H:%i:00Z')`;

/** One read over the operational tables; nothing is cached, the console polls it. */
export async function getOverview(ctx: AppContext): Promise<Overview> {
  const q = (sql: string, params: unknown[] = []) => ctx.ds.query(sql, params) as Promise<Row[]>;
  const now = new Date();
  const since = new Date(now.getTime() - WINDOW_MINUTES * 60_000);
  const [inboundRows, assessmentRows, deliveryRows, queue, destinations, monitors, recent] = await Promise.all([
    q(`SELECT ${minuteExpr('received_at')} AS minute, outcome AS k, COUNT(*) AS c FROM inbound_message WHERE received_at >= ? GROUP BY minute, k`, [since]),
    q(`SELECT ${minuteExpr('window_end')} AS minute, verdict AS k, COUNT(*) AS c FROM assessment WHERE window_end >= ? GROUP BY minute, k`, [since]),
    q(
      `SELECT ${minuteExpr('updated_at')} AS minute, status AS k, COUNT(*) AS c FROM delivery WHERE updated_at >= ? AND status IN ('delivered','failed') GROUP BY minute, k`,
      [since],
    ),
    q(`SELECT status AS k, COUNT(*) AS c FROM delivery WHERE status IN ('pending','retrying','waiting-context','failed') GROUP BY status`),
    q(`SELECT id, name, paused, circuit_state, down_since, configuration_error FROM destination ORDER BY name`),
    q(`SELECT COUNT(*) AS total, SUM(last_seen_at >= ?) AS live FROM monitor`, [new Date(now.getTime() - LIVE_SECONDS * 1000)]),
    q(`SELECT COUNT(*) AS c FROM inbound_message WHERE received_at >= ?`, [new Date(now.getTime() - 5 * 60_000)]),
  ]);
  const inboundSeries = series(
    inboundRows,
    ['accepted', 'rejected', 'quarantined'] as const,
    (k) =>
      k === 'accepted' || k === 'duplicate' || k === 'reprocessed'
        ? 'accepted'
        : k === 'quarantined'
          ? 'quarantined'
          : k === 'rejected'
            ? 'rejected'
            : undefined,
    now,
  );
  const verdictSeries = series(
    assessmentRows,
    ['valid', 'questionable', 'notValid'] as const,
    (k) => (k === 'not-valid' ? 'notValid' : k === 'valid' || k === 'questionable' ? k : undefined),
    now,
  );
  const deliverySeries = series(deliveryRows, ['delivered', 'failed'] as const, (k) => (k === 'delivered' || k === 'failed' ? k : undefined), now);
  const sum = <K extends string>(s: Record<K, number>[], k: K) => s.reduce((a, b) => a + b[k], 0);
  const queueCount = (k: string) => n(queue.find((r) => r.k === k)?.c);
  return {
    generatedAt: now.toISOString(),
    windowMinutes: WINDOW_MINUTES,
    inbound: {
      accepted: sum(inboundSeries, 'accepted'),
      rejected: sum(inboundSeries, 'rejected'),
      quarantined: sum(inboundSeries, 'quarantined'),
      perMinute: Math.round((n(recent[0]?.c) / 5) * 10) / 10,
      series: inboundSeries,
    },
    assessments: {
      valid: sum(verdictSeries, 'valid'),
      questionable: sum(verdictSeries, 'questionable'),
      notValid: sum(verdictSeries, 'notValid'),
      series: verdictSeries,
    },
    delivery: {
      queueDepth: queueCount('pending') + queueCount('retrying') + queueCount('waiting-context'),
      failed: queueCount('failed'),
      delivered: sum(deliverySeries, 'delivered'),
      series: deliverySeries,
    },
    destinations: destinations.map((d) => ({
      id: String(d.id),
      name: String(d.name),
      state: d.configuration_error ? 'misconfigured' : n(d.paused) ? 'paused' : d.circuit_state === 'open' ? 'circuit-open' : d.down_since ? 'down' : 'up',
      downSince: d.down_since ? new Date(d.down_since as Date).toISOString() : null,
    })),
    monitors: { total: n(monitors[0]?.total), live: n(monitors[0]?.live) },
  };
}
