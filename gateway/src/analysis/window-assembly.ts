import type { DataSource, EntityManager } from 'typeorm';
import type { AnalysisContext, ChannelRole } from '@ebbgate/shared';
import type { AnalysisChannel, AnalysisInput } from '@ebbgate/shared/analysis';
import { storedSamplesToFloat32 } from '../ingest/decoded-batch';

/** Segments longer than this are not looked for before a window start (keeps the index range small). */
const MAX_SEGMENT_SECONDS = 3600;

interface SegmentRow {
  role: ChannelRole;
  unit: string;
  sample_rate: number;
  start_time: Date;
  sample_count: number;
  samples: Buffer;
  inbound_message_id: string;
}

export interface AssembledWindow {
  input: AnalysisInput;
  /** Every inbound message with data in the window, oldest batch first (the last one's context applies). */
  messageIds: string[];
}

/**
 * Rebuilds one window per role from stored segments on a common time base: sample i of a
 * channel is at windowStart + i / sampleRate; samples nobody sent stay NaN (gaps). Overlapping
 * segments: the later batch wins.
 */
export async function assembleWindow(db: DataSource | EntityManager, monitorId: string, windowStart: Date, windowEnd: Date): Promise<AssembledWindow> {
  const rows = (await db.query(
    `SELECT role, unit, sample_rate, start_time, sample_count, samples, inbound_message_id FROM waveform_segment
     WHERE monitor_id = ? AND role IN ('abp', 'pleth', 'paw', 'co2') AND start_time < ? AND start_time > ? AND end_time > ?
     ORDER BY role, start_time, id`,
    [monitorId, windowEnd, new Date(windowStart.getTime() - MAX_SEGMENT_SECONDS * 1000), windowStart],
  )) as SegmentRow[];
  const startMs = windowStart.getTime();
  const spanS = (windowEnd.getTime() - startMs) / 1000;
  const channels: AnalysisChannel[] = [];
  const firstSeen = new Map<string, number>();
  for (const role of ['abp', 'pleth', 'paw', 'co2'] as const) {
    const segs = rows.filter((r) => r.role === role);
    if (!segs.length) continue;
    const fs = Number(segs[0]!.sample_rate);
    const n = Math.round(spanS * fs);
    const out = new Float32Array(n).fill(Number.NaN);
    for (const s of segs) {
      if (Number(s.sample_rate) !== fs) continue; // a rate change mid-window: keep the first rate's data
      const values = storedSamplesToFloat32(s.samples);
      const offset = Math.round(((s.start_time.getTime() - startMs) / 1000) * fs);
      const from = Math.max(0, -offset);
      const to = Math.min(values.length, n - offset);
      if (to > from) out.set(values.subarray(from, to), offset + from);
      const at = s.start_time.getTime();
      if (at < (firstSeen.get(s.inbound_message_id) ?? Infinity)) firstSeen.set(s.inbound_message_id, at);
    }
    channels.push({ role, sampleRate: fs, unit: segs[0]!.unit, samples: out });
  }
  const messageIds = [...firstSeen].sort((a, b) => a[1] - b[1]).map(([id]) => id);
  return { input: { channels, startTime: windowStart.toISOString() }, messageIds };
}

/** The batch contexts of stored messages, in the order of `messageIds` (undefined where a batch had none). */
export async function contextsOfMessages(db: DataSource | EntityManager, messageIds: string[]): Promise<(AnalysisContext | undefined)[]> {
  if (!messageIds.length) return [];
  const rows = (await db.query('SELECT id, context FROM inbound_message WHERE id IN (?)', [messageIds])) as { id: string | number; context: string | null }[];
  const byId = new Map(rows.map((r) => [String(r.id), r.context ? (JSON.parse(r.context) as AnalysisContext) : undefined]));
  return messageIds.map((id) => byId.get(String(id)));
}
