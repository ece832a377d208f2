import type { BedTrend, TrendEvent, TrendPoint, TrendQuery } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { notFound } from '../http/problem';
import { getSiteSettings } from '../settings/settings.service';
import { minMaxDownsample } from './downsample';

type Row = Record<string, unknown>;
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

interface Ctx {
  ventilationMode?: string;
  tidalVolumeMl?: number;
  vasopressorRunning?: boolean;
  [k: string]: unknown;
}

/** Context changes as the monitors reported them with their batches, in time order. */
export function contextEvents(rows: { t: Date; context: Ctx }[]): TrendEvent[] {
  const events: TrendEvent[] = [];
  let prev: Ctx | null = null;
  for (const { t, context: c } of rows) {
    const at = t.toISOString();
    if (prev) {
      if (c.tidalVolumeMl !== undefined && prev.tidalVolumeMl !== undefined && c.tidalVolumeMl !== prev.tidalVolumeMl)
        events.push({ t: at, kind: 'tidal-volume', label: `Tidal volume ${prev.tidalVolumeMl} → ${c.tidalVolumeMl} mL`, assessmentId: null });
      if (c.ventilationMode && prev.ventilationMode && c.ventilationMode !== prev.ventilationMode)
        events.push({ t: at, kind: 'ventilation-mode', label: `Ventilation ${prev.ventilationMode} → ${c.ventilationMode}`, assessmentId: null });
      if (c.vasopressorRunning !== undefined && prev.vasopressorRunning !== undefined && c.vasopressorRunning !== prev.vasopressorRunning)
        events.push({ t: at, kind: 'vasopressor', label: c.vasopressorRunning ? 'Vasopressor started' : 'Vasopressor stopped', assessmentId: null });
      for (const [k, v] of Object.entries(c)) {
        if (typeof v !== 'boolean' || ['vasopressorRunning'].includes(k) || prev[k] === undefined || prev[k] === v) continue;
        events.push({ t: at, kind: 'checklist', label: `${k.replace(/([A-Z])/g, ' $1').toLowerCase()}: ${v ? 'yes' : 'no'}`, assessmentId: null });
      }
    }
    prev = { ...(prev ?? {}), ...c };
  }
  return events;
}

/**
 * A bed's indices over a span. Up to `maxPoints` windows come back as they are; longer spans are
 * reduced to min/max per bucket on the server, so 48 h of 10-s windows (17,280) stays a few
 * thousand points. Events: context changes from the batches, bed transfers (monitor or patient
 * changes between windows), and the engine's challenge and flush-test results where present.
 */
export async function getBedTrend(ctx: AppContext, bedId: string, query: TrendQuery): Promise<BedTrend> {
  const [bed] = (await ctx.ds.query('SELECT id, name, unit FROM bed WHERE id = ? OR name = ?', [bedId, bedId])) as Row[];
  if (!bed) throw notFound('The bed');
  const to = query.to ? new Date(query.to) : new Date();
  const from = new Date(to.getTime() - query.hours * 3_600_000);
  const rows = (await ctx.ds.query(
    `SELECT id, monitor_id, patient_ref, window_end, verdict, ppv, spv, delta_pop, heart_rate, respiratory_rate, flags
     FROM assessment WHERE bed_id = ? AND window_start >= ? AND window_start < ? AND entered_in_error_at IS NULL ORDER BY window_start, created_at`,
    [bed.id, from, to],
  )) as Row[];
  const raw: TrendPoint[] = rows.map((r) => ({
    t: new Date(r.window_end as Date).toISOString(),
    assessmentId: String(r.id),
    verdict: r.verdict as TrendPoint['verdict'],
    ppv: num(r.ppv),
    spv: num(r.spv),
    deltaPop: num(r.delta_pop),
    heartRate: num(r.heart_rate),
    respiratoryRate: num(r.respiratory_rate),
    windows: 1,
  }));
  const downsampled = raw.length > query.maxPoints;
  const bucketSeconds = downsampled ? Math.ceil((to.getTime() - from.getTime()) / 1000 / Math.floor(query.maxPoints / 2)) : null;
  const points = downsampled ? minMaxDownsample(raw, from.getTime(), bucketSeconds! * 1000) : raw;

  const events: TrendEvent[] = [];
  for (let i = 1; i < rows.length; i++) {
    const a = rows[i - 1]!;
    const b = rows[i]!;
    if (a.monitor_id !== b.monitor_id) events.push({ t: raw[i]!.t, kind: 'bed-transfer', label: 'Another monitor in this bed', assessmentId: String(b.id) });
    else if (a.patient_ref && b.patient_ref && a.patient_ref !== b.patient_ref)
      events.push({ t: raw[i]!.t, kind: 'bed-transfer', label: 'Another patient in this bed', assessmentId: String(b.id) });
  }
  const monitorIds = [...new Set(rows.map((r) => String(r.monitor_id)))];
  if (monitorIds.length) {
    const ctxRows = (await ctx.ds.query(
      `SELECT batch_start, context FROM inbound_message WHERE monitor_id IN (?) AND batch_start >= ? AND batch_start < ? AND context IS NOT NULL AND outcome IN ('accepted','reprocessed') ORDER BY batch_start`,
      [monitorIds, from, to],
    )) as Row[];
    events.push(...contextEvents(ctxRows.map((r) => ({ t: new Date(r.batch_start as Date), context: parseJson<Ctx>(r.context, {}) }))));
  }
  events.push(...challengeSteps(events), ...(await challengeEvents(ctx, String(bed.id), from, to)));
  events.sort((x, y) => x.t.localeCompare(y.t));

  const settings = await getSiteSettings(ctx);
  const ppvBands = settings.analysis.bands.filter((b) => b.index === 'ppv');
  const band = ppvBands.find((b) => /grey/i.test(b.id)) ?? ppvBands.find((b) => /^grey/i.test(b.label));
  return {
    bed: { id: String(bed.id), name: String(bed.name), unit: String(bed.unit) },
    from: from.toISOString(),
    to: to.toISOString(),
    windows: raw.length,
    downsampled,
    bucketSeconds,
    points,
    events,
    greyZone: band ? { lower: band.lower, upper: band.upper, label: band.label, source: band.source } : null,
  };
}

/**
 * Flush tests the engine measured (windows flagged with a flush, then their flushTests) and the
 * tidal volume challenges the engine judged where a result carries one. Only flagged windows are
 * opened, so a 48-h span does not parse every stored result.
 */
async function challengeEvents(ctx: AppContext, bedId: string, from: Date, to: Date): Promise<TrendEvent[]> {
  const rows = (await ctx.ds.query(
    `SELECT id, window_end, flags, JSON_EXTRACT(result, '$.arterialLine.flushTests') AS ft, challenge_verdict, challenge_delta_ppv
     FROM assessment WHERE bed_id = ? AND window_start >= ? AND window_start < ? AND entered_in_error_at IS NULL
       AND (flags LIKE '%"arterial-flush"%' OR flags LIKE '%"arterial-underdamped"%' OR flags LIKE '%"arterial-damped"%' OR challenge_verdict IS NOT NULL)`,
    [bedId, from, to],
  )) as Row[];
  const out: TrendEvent[] = [];
  for (const r of rows) {
    const t = new Date(r.window_end as Date).toISOString();
    const tests = parseJson<{ naturalFrequencyHz: number | null; dampingRatio: number | null; regionText?: string }[] | null>(r.ft, null);
    if ((!Array.isArray(tests) || tests.length === 0) && parseJson<string[]>(r.flags, []).includes('arterial-flush'))
      out.push({ t, kind: 'flush-test', label: 'Flush seen on the arterial line (not measured)', assessmentId: String(r.id) });
    for (const f of Array.isArray(tests) ? tests : []) {
      const fn = f.naturalFrequencyHz === null ? 'fn —' : `fn ${f.naturalFrequencyHz.toFixed(1)} Hz`;
      const z = f.dampingRatio === null ? 'ζ —' : `ζ ${f.dampingRatio.toFixed(2)}`;
      out.push({ t, kind: 'flush-test', label: `Flush test: ${fn}, ${z}${f.regionText ? ` — ${f.regionText}` : ''}`, assessmentId: String(r.id) });
    }
    // The engine's judgement, stored on the assessment that completed the challenge.
    if (r.challenge_verdict) {
      const delta =
        r.challenge_delta_ppv === null || r.challenge_delta_ppv === undefined
          ? ''
          : `, ΔPPV ${Number(r.challenge_delta_ppv) > 0 ? '+' : ''}${Number(r.challenge_delta_ppv).toFixed(1)} points`;
      out.push({
        t,
        kind: 'tidal-volume-challenge',
        label: `Tidal volume challenge judged: ${String(r.challenge_verdict).replace(/-/g, ' ')}${delta}`,
        assessmentId: String(r.id),
      });
    }
  }
  return out;
}

/** A raise of tidal volume undone within minutes reads as a tidal volume challenge (its judgement is the engine's). */
export function challengeSteps(events: TrendEvent[], maxHoldMs = 5 * 60_000): TrendEvent[] {
  const tv = events.filter((e) => e.kind === 'tidal-volume');
  const out: TrendEvent[] = [];
  const vol = (label: string) => label.match(/(\d+(?:\.\d+)?) → (\d+(?:\.\d+)?)/);
  for (let i = 0; i + 1 < tv.length; i++) {
    const up = vol(tv[i]!.label);
    const down = vol(tv[i + 1]!.label);
    if (!up || !down) continue;
    const [a, b] = [Number(up[1]), Number(up[2])];
    const [c, d] = [Number(down[1]), Number(down[2])];
    const held = Date.parse(tv[i + 1]!.t) - Date.parse(tv[i]!.t);
    if (b > a && c === b && d < c && held <= maxHoldMs)
      out.push({
        t: tv[i]!.t,
        kind: 'tidal-volume-challenge',
        label: `Tidal volume raised ${a} → ${b} mL for ${Math.round(held / 1000)} s`,
        assessmentId: null,
      });
  }
  return out;
}

/** The latest flush test the engine measured on a monitor's arterial line, within the last day. */
export async function latestFlushTest(ctx: AppContext, monitorId: string) {
  const since = new Date(Date.now() - 24 * 3_600_000);
  const rows = (await ctx.ds.query(
    `SELECT a.id, a.window_end, JSON_EXTRACT(a.result, '$.arterialLine.flushTests') AS ft, JSON_EXTRACT(a.result, '$.arterialLine.dampingEstimate') AS de
     FROM assessment a JOIN monitor m ON m.id = a.monitor_id
     WHERE (m.id = ? OR m.identifier = ?) AND a.window_start >= ? AND a.entered_in_error_at IS NULL AND a.flags LIKE '%"arterial-%'
     ORDER BY a.window_start DESC LIMIT 200`,
    [monitorId, monitorId, since],
  )) as Row[];
  for (const r of rows) {
    const tests = parseJson<unknown[] | null>(r.ft, null);
    if (Array.isArray(tests) && tests.length > 0) {
      return {
        assessmentId: String(r.id),
        windowEnd: new Date(r.window_end as Date).toISOString(),
        flushTest: tests[tests.length - 1] as Record<string, unknown>,
        dampingEstimate: parseJson<string | null>(r.de, null),
      };
    }
  }
  return null;
}

const CSV_COLUMNS = ['t', 'assessmentId', 'verdict', 'ppv', 'spv', 'deltaPop', 'heartRate', 'respiratoryRate', 'windows'] as const;

/** The shown series as CSV (RFC 4180: CRLF, quoted when needed); times are ISO 8601 UTC. */
export function trendCsv(trend: BedTrend): string {
  const cell = (v: unknown) => {
    const s = v === null || v === undefined ? '' : String(v);
    return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  const lines = [CSV_COLUMNS.join(','), ...trend.points.map((p) => CSV_COLUMNS.map((c) => cell(p[c])).join(','))];
  return lines.join('\r\n') + '\r\n';
}
