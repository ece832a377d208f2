import { z } from 'zod';
import { analysisContextSchema, CHANNEL_ROLES, decodeSamples, ingestBatchSchema, type ChannelRole, type IngestBatch } from '../schemas/ingest';
import { splitAtContextChanges } from './challenge';
import type { AnalysisChannel, AnalysisInput, ChallengeInput } from './types';

/** A capture file that cannot be read, with the 1-based line and column of the problem. */
export class CaptureParseError extends Error {
  constructor(
    message: string,
    readonly line: number,
    readonly column: number,
  ) {
    super(`line ${line}, column ${column}: ${message}`);
    this.name = 'CaptureParseError';
  }
}

/**
 * Default channel code → role map for captures without a monitor profile: IEEE 11073 MDC
 * reference ids, the numeric codes given in the ingest contract, plus the plain role labels.
 */
export const DEFAULT_CODE_ROLES: Readonly<Record<string, ChannelRole>> = {
  '150036': 'abp',
  MDC_PRESS_BLD_ART_ABP: 'abp',
  MDC_PRESS_BLD_ART: 'abp',
  '150452': 'pleth',
  MDC_PULS_OXIM_PLETH: 'pleth',
  MDC_PRESS_AWAY: 'paw',
  MDC_AWAY_CO2: 'co2',
  abp: 'abp',
  pleth: 'pleth',
  paw: 'paw',
  co2: 'co2',
};

/** Role of a channel code, from the map given (default {@link DEFAULT_CODE_ROLES}), or null. */
export function roleForCode(code: string, map: Readonly<Record<string, ChannelRole>> = DEFAULT_CODE_ROLES): ChannelRole | null {
  return map[code] ?? map[code.toLowerCase()] ?? null;
}

/**
 * Turns an ingest batch (already validated, or raw JSON to validate) into engine input. Channels
 * whose role is neither given nor in the code map are skipped and named in `skipped`.
 */
export function batchToAnalysisInput(
  batch: IngestBatch,
  codeRoles: Readonly<Record<string, ChannelRole>> = DEFAULT_CODE_ROLES,
): AnalysisInput & { skipped: string[] } {
  const channels: AnalysisChannel[] = [];
  const skipped: string[] = [];
  for (const ch of batch.channels) {
    const role = ch.role ?? roleForCode(ch.code, codeRoles);
    if (!role) {
      skipped.push(ch.code);
      continue;
    }
    const unit = ch.unit ?? (role === 'abp' || role === 'co2' ? 'mmHg' : role === 'paw' ? 'cmH2O' : 'au');
    channels.push({ role, sampleRate: ch.sampleRate, unit, samples: decodeSamples(ch.samples) });
  }
  return { channels, context: batch.context, startTime: batch.startTime, skipped };
}

function lineCol(text: string, pos: number): { line: number; column: number } {
  let line = 1;
  let last = -1;
  for (let i = 0; i < Math.min(pos, text.length); i++)
    if (text.charCodeAt(i) === 10) {
      line++;
      last = i;
    }
  return { line, column: pos - last };
}

/** Finds where in the JSON text a schema path points (the key of its last element), best effort. */
function locatePath(text: string, path: PropertyKey[]): { line: number; column: number } {
  let pos = 0;
  for (const key of path) {
    if (typeof key === 'number') continue;
    const at = text.indexOf(`"${String(key)}"`, pos);
    if (at < 0) break;
    pos = at;
  }
  return lineCol(text, pos);
}

/** Parses and validates a JSON ingest batch; errors name line and column. */
export function parseBatchJson(text: string): IngestBatch {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    const msg = (e as Error).message;
    const m = /position (\d+)/.exec(msg);
    const { line, column } = m ? lineCol(text, Number(m[1])) : { line: 1, column: 1 };
    throw new CaptureParseError(`not valid JSON (${msg.replace(/ in JSON at position \d+.*/, '')})`, line, column);
  }
  const parsed = ingestBatchSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const { line, column } = locatePath(text, issue.path);
    throw new CaptureParseError(`${issue.path.join('.') || '(root)'}: ${issue.message}`, line, column);
  }
  return parsed.data;
}

/**
 * Parses a CSV capture: header `time,<role>[<unit>],…` (roles abp, pleth, paw, co2), a time
 * column in seconds at a constant step (the sample rate follows from it), empty cells as gaps.
 */
export function parseCsvCapture(text: string): AnalysisInput {
  const lines = text.split(/\r?\n/);
  while (lines.length && lines[lines.length - 1].trim() === '') lines.pop();
  if (lines.length < 3) throw new CaptureParseError('a CSV capture needs a header and at least two rows', Math.max(1, lines.length), 1);
  const header = lines[0].split(',').map((h) => h.trim());
  if (header[0].toLowerCase() !== 'time') throw new CaptureParseError(`first column must be "time", found "${header[0]}"`, 1, 1);
  const cols: { role: ChannelRole; unit: string }[] = [];
  let col = header[0].length + 2;
  for (let c = 1; c < header.length; c++) {
    const m = /^([a-z0-9]+)\[([^\]]+)\]$/i.exec(header[c]);
    const role = m?.[1].toLowerCase();
    if (!m || !role || !(CHANNEL_ROLES as readonly string[]).includes(role)) {
      throw new CaptureParseError(`column header "${header[c]}" must be role[unit] with role one of ${CHANNEL_ROLES.join(', ')}`, 1, col);
    }
    if (cols.some((x) => x.role === role)) throw new CaptureParseError(`channel ${role} appears twice`, 1, col);
    cols.push({ role: role as ChannelRole, unit: m[2] });
    col += header[c].length + 1;
  }
  if (cols.length === 0) throw new CaptureParseError('no channel columns after time', 1, col);
  const n = lines.length - 1;
  const times = new Float64Array(n);
  const data = cols.map(() => new Float64Array(n));
  for (let r = 0; r < n; r++) {
    const line = lines[r + 1];
    const cells = line.split(',');
    if (cells.length !== header.length) throw new CaptureParseError(`expected ${header.length} cells, found ${cells.length}`, r + 2, line.length + 1);
    let column = 1;
    for (let c = 0; c < cells.length; c++) {
      const cell = cells[c].trim();
      if (cell === '' && c > 0) data[c - 1][r] = Number.NaN;
      else {
        const v = Number(cell);
        if (cell === '' || !Number.isFinite(v)) throw new CaptureParseError(`"${cells[c]}" is not a number`, r + 2, column);
        if (c === 0) times[r] = v;
        else data[c - 1][r] = v;
      }
      column += cells[c].length + 1;
    }
  }
  const first = times[1] - times[0];
  if (!(first > 0)) throw new CaptureParseError('time column must increase', 3, 1);
  for (let r = 1; r < n; r++) {
    const d = times[r] - times[r - 1];
    if (Math.abs(d - first) > 0.01 * first)
      throw new CaptureParseError(`time step ${d} s differs from the first step ${first} s (irregular sampling)`, r + 2, 1);
  }
  const step = (times[n - 1] - times[0]) / (n - 1);
  const fs = Math.round((1 / step) * 1e6) / 1e6;
  return { channels: cols.map((c, i) => ({ role: c.role, unit: c.unit, sampleRate: fs, samples: data[i] })) };
}

/** A batch with context changes inside it (a whole tidal volume challenge in one capture). */
const challengeBatchSchema = ingestBatchSchema.extend({
  contextChanges: z
    .array(z.object({ atSeconds: z.number().min(0).max(86_400), context: analysisContextSchema }))
    .min(1)
    .max(16),
});

function parseJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch (e) {
    const msg = (e as Error).message;
    const m = /position (\d+)/.exec(msg);
    const { line, column } = m ? lineCol(text, Number(m[1])) : { line: 1, column: 1 };
    throw new CaptureParseError(`not valid JSON (${msg.replace(/ in JSON at position \d+.*/, '')})`, line, column);
  }
}

function toInput(batch: IngestBatch): AnalysisInput {
  const { skipped, ...input } = batchToAnalysisInput(batch);
  if (input.channels.length === 0) throw new CaptureParseError(`no channel with a known role (codes: ${skipped.join(', ')})`, 1, 1);
  return input;
}

/**
 * Reads a whole tidal volume challenge: a JSON array of batches (one per context segment, in time
 * order) or one batch with `contextChanges: [{ atSeconds, context }]`. Null when the text is a
 * plain single window.
 */
export function readChallengeCapture(text: string): ChallengeInput | null {
  const head = text.trimStart();
  if (!head.startsWith('[') && !(head.startsWith('{') && /"contextChanges"\s*:/.test(text))) return null;
  const raw = parseJson(text);
  if (Array.isArray(raw)) {
    if (raw.length < 2) throw new CaptureParseError('a challenge needs at least two batches (before and after the step)', 1, 1);
    const segments = raw.map((item, k) => {
      const parsed = ingestBatchSchema.safeParse(item);
      if (!parsed.success) {
        const issue = parsed.error.issues[0];
        const { line, column } = locatePath(text, [k, ...issue.path]);
        throw new CaptureParseError(`[${k}].${issue.path.join('.') || '(root)'}: ${issue.message}`, line, column);
      }
      return toInput(parsed.data);
    });
    return { segments };
  }
  const parsed = challengeBatchSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const { line, column } = locatePath(text, issue.path);
    throw new CaptureParseError(`${issue.path.join('.') || '(root)'}: ${issue.message}`, line, column);
  }
  const { contextChanges, ...batch } = parsed.data;
  return { segments: splitAtContextChanges(toInput(batch), contextChanges) };
}

/** Reads a capture file's text into engine input, choosing the format by content (JSON batch or CSV). */
export function readCapture(text: string): AnalysisInput {
  if (text.trimStart().startsWith('{')) {
    const { skipped, ...input } = batchToAnalysisInput(parseBatchJson(text));
    if (input.channels.length === 0) throw new CaptureParseError(`no channel with a known role (codes: ${skipped.join(', ')})`, 1, 1);
    return input;
  }
  return parseCsvCapture(text);
}
