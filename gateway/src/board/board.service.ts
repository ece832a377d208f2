import type { BedDataState, BedTile, Board, BoardQuery } from '@ebbgate/shared';
import type { AppContext } from '../app-context';

/** A monitor that has sent nothing for this long is stale (a window is 10–30 s; two missed batches of any sensible size). */
export const STALE_AFTER_SECONDS = 60;
/** Quarantined inbound messages this recent make a bed "quarantining". */
const QUARANTINE_MINUTES = 5;
const TREND_MINUTES = 60;
const TREND_BUCKET_MINUTES = 5;

/**
 * Windows whose patient lookup has not run yet fall back to the newest earlier one that has, among
 * this many (10 min of 10-s windows); the cap bounds the read when deliveries stall on every bed.
 */
const SETTLED_LOOKBACK_WINDOWS = 60;

type Row = Record<string, unknown>;

/**
 * What the delivery side knows about a window's patient: the patient a delivery resolved (before
 * or after it was sent), whether a delivery waits because the EHR names nobody in the bed, and
 * how many deliveries the window has.
 */
const WINDOW_CONTEXT_COLUMNS = `
  (SELECT JSON_OBJECT('ref', d.patient_ref, 'name', d.patient_name, 'mrn', d.patient_mrn) FROM delivery d
    WHERE d.assessment_id = a.id AND d.patient_ref IS NOT NULL ORDER BY d.id DESC LIMIT 1) AS resolved,
  (SELECT COUNT(*) FROM delivery d WHERE d.assessment_id = a.id AND d.status = 'waiting-context') AS waiting,
  (SELECT COUNT(*) FROM delivery d WHERE d.assessment_id = a.id) AS deliveries`;

interface WindowPatient {
  ref: string | null;
  name: string | null;
  mrn: string | null;
  waitingForPatient: boolean;
  /** False while the window's deliveries have not looked up its patient yet (just stored). */
  settled: boolean;
}

/** A window's patient, from the assessment once filed, else from its delivery's context lookup. */
export function windowPatient(a: Row): WindowPatient {
  const resolved = parseJson<{ ref?: string | null; name?: string | null; mrn?: string | null } | null>(a.resolved, null);
  const ref = a.patient_ref ? String(a.patient_ref) : (resolved?.ref ?? null);
  const fromResolved = !a.patient_ref && resolved?.ref;
  const name = a.patient_name ? String(a.patient_name) : fromResolved ? (resolved.name ?? null) : null;
  const mrn = a.patient_mrn ? String(a.patient_mrn) : fromResolved ? (resolved.mrn ?? null) : null;
  const waitingForPatient = !ref && Number(a.waiting) > 0;
  return { ref, name, mrn, waitingForPatient, settled: Boolean(ref) || waitingForPatient || Number(a.deliveries) === 0 };
}
const SEVERITY: Record<string, number> = { critical: 3, warning: 2, info: 1 };
const STATES: BedDataState[] = ['no-monitor', 'quarantining', 'stale', 'no-patient', 'sending'];
const iso = (v: unknown) => (v === null || v === undefined ? null : new Date(v as Date).toISOString());
const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));

function parseJson<T>(v: unknown, fallback: T): T {
  if (v === null || v === undefined) return fallback;
  if (typeof v !== 'string') return v as T;
  try {
    return JSON.parse(v) as T;
  } catch {
    return fallback;
  }
}

export function mainFlag(flags: { code?: string; severity?: string; reason?: string }[]): { code: string; severity: string; reason: string } | null {
  let best: (typeof flags)[number] | null = null;
  for (const f of flags) if (f.code && (!best || (SEVERITY[f.severity ?? ''] ?? 0) > (SEVERITY[best.severity ?? ''] ?? 0))) best = f;
  return best ? { code: best.code!, severity: best.severity ?? 'info', reason: best.reason ?? '' } : null;
}

/** Worst state first: the on-call admin looks for what needs them. */
export function bedState(input: { hasMonitor: boolean; quarantined: number; lastSeenAgeSeconds: number | null; waitingForPatient: boolean }): {
  state: BedDataState;
  reason: string;
} {
  if (!input.hasMonitor) return { state: 'no-monitor', reason: 'No monitor is assigned to this bed.' };
  if (input.quarantined > 0)
    return {
      state: 'quarantining',
      reason: `${input.quarantined} inbound message${input.quarantined === 1 ? '' : 's'} quarantined in the last ${QUARANTINE_MINUTES} minutes.`,
    };
  if (input.lastSeenAgeSeconds === null) return { state: 'stale', reason: 'The monitor has never sent data.' };
  if (input.lastSeenAgeSeconds > STALE_AFTER_SECONDS) return { state: 'stale', reason: `Nothing received for ${Math.round(input.lastSeenAgeSeconds)} s.` };
  if (input.waitingForPatient) return { state: 'no-patient', reason: 'The EHR names no patient in this bed; results wait for context.' };
  return { state: 'sending', reason: 'Data arrives from the monitor.' };
}

/**
 * The beds board in one read: every bed with its monitor, latest assessment, last hour and data
 * state, aggregated here so the console makes one call however many beds there are. States are
 * computed for all beds before filtering, so the counts describe the whole board.
 */
export async function getBoard(ctx: AppContext, query: BoardQuery, now = new Date()): Promise<Board> {
  const q = (sql: string, params: unknown[] = []) => ctx.ds.query(sql, params) as Promise<Row[]>;
  const trendSince = new Date(now.getTime() - TREND_MINUTES * 60_000);
  const [beds, monitors, latest, trend, quarantine] = await Promise.all([
    q('SELECT id, name, unit FROM bed ORDER BY unit, name'),
    q('SELECT id, identifier, bed_id, last_seen_at FROM monitor WHERE bed_id IS NOT NULL AND enabled = 1 ORDER BY last_seen_at DESC'),
    // Latest window per bed through the (bed_id, window_start) index; entered-in-error results do not count.
    q(`SELECT a.id, a.bed_id, a.window_end, a.verdict, a.ppv, a.spv, a.delta_pop, a.patient_ref, a.patient_name, a.patient_mrn, a.flags, a.created_at,
              JSON_EXTRACT(a.result, '$.flags') AS flag_detail, ${WINDOW_CONTEXT_COLUMNS}
       FROM assessment a
       JOIN (SELECT bed_id, MAX(window_start) AS ws FROM assessment WHERE bed_id IS NOT NULL AND entered_in_error_at IS NULL GROUP BY bed_id) l
         ON l.bed_id = a.bed_id AND l.ws = a.window_start
       WHERE a.entered_in_error_at IS NULL`),
    q(
      `SELECT bed_id, FLOOR(UNIX_TIMESTAMP(window_start) / ?) AS b,
              AVG(CASE WHEN verdict <> 'not-valid' THEN ppv END) AS ppv,
              MAX(CASE verdict WHEN 'not-valid' THEN 2 WHEN 'questionable' THEN 1 ELSE 0 END) AS worst
       FROM assessment WHERE bed_id IS NOT NULL AND window_start >= ? AND entered_in_error_at IS NULL GROUP BY bed_id, b`,
      [TREND_BUCKET_MINUTES * 60, trendSince],
    ),
    q(
      `SELECT monitor_id, COUNT(*) AS c FROM inbound_message WHERE outcome = 'quarantined' AND handled_at IS NULL AND received_at >= ? AND monitor_id IS NOT NULL GROUP BY monitor_id`,
      [new Date(now.getTime() - QUARANTINE_MINUTES * 60_000)],
    ),
  ]);

  const monitorByBed = new Map<string, Row>();
  for (const m of monitors) if (!monitorByBed.has(String(m.bed_id))) monitorByBed.set(String(m.bed_id), m);
  const latestByBed = new Map<string, Row>();
  for (const a of latest) {
    const prev = latestByBed.get(String(a.bed_id));
    // Several engine versions can share a window: the most recent run wins.
    if (!prev || new Date(a.created_at as Date) > new Date(prev.created_at as Date)) latestByBed.set(String(a.bed_id), a);
  }
  const patientByBed = await settledPatients(q, latestByBed, trendSince);
  const quarantinedByMonitor = new Map(quarantine.map((r) => [String(r.monitor_id), Number(r.c)]));
  const bucketSeconds = TREND_BUCKET_MINUTES * 60;
  const firstBucket = Math.floor(trendSince.getTime() / 1000 / bucketSeconds);
  const bucketCount = TREND_MINUTES / TREND_BUCKET_MINUTES + 1;
  const trendByBed = new Map<string, Map<number, Row>>();
  for (const r of trend) {
    const m = trendByBed.get(String(r.bed_id)) ?? new Map<number, Row>();
    m.set(Number(r.b), r);
    trendByBed.set(String(r.bed_id), m);
  }
  const WORST = ['valid', 'questionable', 'not-valid'] as const;

  const tiles: BedTile[] = beds.map((b) => {
    const bedId = String(b.id);
    const monitor = monitorByBed.get(bedId);
    const a = latestByBed.get(bedId);
    const patient = patientByBed.get(bedId);
    const lastSeen = monitor?.last_seen_at ? new Date(monitor.last_seen_at as Date) : null;
    const { state, reason } = bedState({
      hasMonitor: Boolean(monitor),
      quarantined: monitor ? (quarantinedByMonitor.get(String(monitor.id)) ?? 0) : 0,
      lastSeenAgeSeconds: lastSeen ? (now.getTime() - lastSeen.getTime()) / 1000 : null,
      waitingForPatient: patient?.waitingForPatient ?? false,
    });
    const buckets = trendByBed.get(bedId);
    const flagCodes = a ? parseJson<string[]>(a.flags, []) : [];
    return {
      bedId,
      bedName: String(b.name),
      unit: String(b.unit),
      patientRef: patient?.ref ?? null,
      patientName: patient?.name ?? null,
      patientMrn: patient?.mrn ?? null,
      monitor: monitor ? { id: String(monitor.id), identifier: String(monitor.identifier), lastSeenAt: iso(monitor.last_seen_at) } : null,
      state,
      stateReason: reason,
      latest: a
        ? {
            assessmentId: String(a.id),
            windowEnd: iso(a.window_end)!,
            ageSeconds: Math.max(0, Math.round((now.getTime() - new Date(a.window_end as Date).getTime()) / 1000)),
            verdict: a.verdict as 'valid' | 'questionable' | 'not-valid',
            ppv: num(a.ppv),
            spv: num(a.spv),
            deltaPop: num(a.delta_pop),
            mainFlag: mainFlag(parseJson(a.flag_detail, [])),
            flagCount: flagCodes.length,
          }
        : null,
      trend: buckets
        ? Array.from({ length: bucketCount }, (_, i) => {
            const r = buckets.get(firstBucket + i);
            return {
              t: new Date((firstBucket + i) * bucketSeconds * 1000).toISOString(),
              ppv: r ? num(r.ppv) : null,
              verdict: r ? WORST[Number(r.worst)]! : null,
            };
          })
        : [],
    };
  });

  const counts = Object.fromEntries(STATES.map((s) => [s, 0])) as Record<BedDataState, number>;
  for (const t of tiles) counts[t.state]++;
  const needle = query.q?.toLowerCase();
  const shown = tiles.filter(
    (t) =>
      (!query.unit || t.unit === query.unit) &&
      (!query.state || t.state === query.state) &&
      (!needle || [t.bedName, t.monitor?.identifier, t.patientRef, t.patientName, t.patientMrn].some((v) => v?.toLowerCase().includes(needle))),
  );
  const start = (query.page - 1) * query.pageSize;
  return {
    generatedAt: now.toISOString(),
    staleAfterSeconds: STALE_AFTER_SECONDS,
    units: [...new Set(beds.map((b) => String(b.unit)))].sort(),
    counts,
    items: shown.slice(start, start + query.pageSize),
    page: query.page,
    pageSize: query.pageSize,
    total: shown.length,
  };
}

/**
 * Each bed's patient and no-patient state, from its newest window whose patient lookup has run:
 * a window just stored has no patient yet, and reading it would blink the tile to "sending" with
 * no name until its delivery looks the patient up. The values shown stay the newest window's.
 */
async function settledPatients(q: (sql: string, params?: unknown[]) => Promise<Row[]>, latestByBed: Map<string, Row>, since: Date) {
  const byBed = new Map<string, WindowPatient>();
  const unsettled: string[] = [];
  for (const [bedId, a] of latestByBed) {
    const p = windowPatient(a);
    byBed.set(bedId, p);
    if (!p.settled) unsettled.push(bedId);
  }
  if (!unsettled.length) return byBed;
  const earlier = await q(
    `SELECT a.bed_id, a.patient_ref, a.patient_name, a.patient_mrn, ${WINDOW_CONTEXT_COLUMNS}
     FROM (SELECT id, ROW_NUMBER() OVER (PARTITION BY bed_id ORDER BY window_start DESC, created_at DESC) AS rn
           FROM assessment WHERE bed_id IN (?) AND window_start >= ? AND entered_in_error_at IS NULL) w
     JOIN assessment a ON a.id = w.id
     WHERE w.rn <= ?
     ORDER BY a.bed_id, w.rn`,
    [unsettled, since, SETTLED_LOOKBACK_WINDOWS],
  );
  const found = new Set<string>();
  for (const r of earlier) {
    const bedId = String(r.bed_id);
    const p = windowPatient(r);
    if (found.has(bedId) || !p.settled) continue;
    found.add(bedId);
    byBed.set(bedId, p);
  }
  return byBed;
}
