import type { DataSource } from 'typeorm';
import type { AssessmentQuery, AssessmentSummary, Page, Waveform } from '@ebbgate/shared';
import { recordAudit } from '../audit/audit.service';
import type { ChangeBy } from '../app-context';
import { assembleWindow } from '../analysis/window-assembly';
import { conflict, notFound } from '../http/problem';
import { AssessmentRow } from './assessment.entity';
import { assessmentEvents } from './events';
import { sortColumn } from '../http/sort';

const SORTABLE: Record<string, string> = {
  windowStart: 'a.window_start',
  createdAt: 'a.created_at',
  verdict: 'a.verdict',
  ppv: 'a.ppv',
  spv: 'a.spv',
  deltaPop: 'a.delta_pop',
  perfusionIndex: 'a.perfusion_index',
  heartRate: 'a.heart_rate',
};
const INDEX_COLUMNS: Record<string, string> = {
  ppv: 'ppv',
  spv: 'spv',
  deltaPop: 'delta_pop',
  perfusionIndex: 'perfusion_index',
  heartRate: 'heart_rate',
  respiratoryRate: 'respiratory_rate',
};

interface SummaryRaw {
  id: string;
  monitorId: string;
  bedId: string | null;
  patientRef: string | null;
  patientName: string | null;
  patientMrn: string | null;
  windowStart: Date;
  windowEnd: Date;
  verdict: AssessmentSummary['verdict'];
  ppv: number | null;
  spv: number | null;
  deltaPop: number | null;
  perfusionIndex: number | null;
  heartRate: number | null;
  respiratoryRate: number | null;
  flags: string;
  engineVersion: string;
  enteredInErrorAt: Date | null;
  createdAt: Date;
}

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));

function toSummary(r: SummaryRaw, deliveryStatus: string | null): AssessmentSummary {
  return {
    id: r.id,
    monitorId: r.monitorId,
    bedId: r.bedId,
    patientRef: r.patientRef,
    patientName: r.patientName ?? null,
    patientMrn: r.patientMrn ?? null,
    windowStart: new Date(r.windowStart).toISOString(),
    windowEnd: new Date(r.windowEnd).toISOString(),
    verdict: r.verdict,
    ppv: num(r.ppv),
    spv: num(r.spv),
    deltaPop: num(r.deltaPop),
    perfusionIndex: num(r.perfusionIndex),
    heartRate: num(r.heartRate),
    respiratoryRate: num(r.respiratoryRate),
    flags: typeof r.flags === 'string' ? (JSON.parse(r.flags) as string[]) : (r.flags as string[]),
    engineVersion: r.engineVersion,
    deliveryStatus,
    enteredInError: r.enteredInErrorAt !== null,
    createdAt: new Date(r.createdAt).toISOString(),
  };
}

function summaryQuery(ds: DataSource) {
  return ds
    .getRepository(AssessmentRow)
    .createQueryBuilder('a')
    .select('a.id', 'id')
    .addSelect('a.monitor_id', 'monitorId')
    .addSelect('a.bed_id', 'bedId')
    .addSelect('a.patient_ref', 'patientRef')
    .addSelect('a.patient_name', 'patientName')
    .addSelect('a.patient_mrn', 'patientMrn')
    .addSelect('a.window_start', 'windowStart')
    .addSelect('a.window_end', 'windowEnd')
    .addSelect('a.verdict', 'verdict')
    .addSelect('a.ppv', 'ppv')
    .addSelect('a.spv', 'spv')
    .addSelect('a.delta_pop', 'deltaPop')
    .addSelect('a.perfusion_index', 'perfusionIndex')
    .addSelect('a.heart_rate', 'heartRate')
    .addSelect('a.respiratory_rate', 'respiratoryRate')
    .addSelect('a.flags', 'flags')
    .addSelect('a.engine_version', 'engineVersion')
    .addSelect('a.entered_in_error_at', 'enteredInErrorAt')
    .addSelect('a.created_at', 'createdAt');
}

async function deliveryStatuses(ds: DataSource, ids: string[]): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  for (const p of assessmentEvents(ds).deliveryStatus) for (const [k, v] of await p(ds, ids)) out.set(k, v);
  return out;
}

export async function listAssessments(ds: DataSource, q: AssessmentQuery): Promise<Page<AssessmentSummary>> {
  const qb = summaryQuery(ds);
  if (q.monitor) qb.andWhere('(a.monitor_id = :monitor OR a.monitor_id IN (SELECT m.id FROM monitor m WHERE m.identifier = :monitor))', { monitor: q.monitor });
  if (q.bed) qb.andWhere('a.bed_id = :bed', { bed: q.bed });
  if (q.patient) qb.andWhere('a.patient_ref = :patient', { patient: q.patient });
  if (q.verdict) qb.andWhere('a.verdict = :verdict', { verdict: q.verdict });
  // Flags are stored as a JSON array of codes; codes are [a-z-] so a quoted LIKE is exact.
  if (q.flag) qb.andWhere('a.flags LIKE :flag', { flag: `%"${q.flag.replace(/[^a-z0-9-]/gi, '')}"%` });
  if (q.index) qb.andWhere(`a.${INDEX_COLUMNS[q.index]} IS NOT NULL`);
  if (q.engineVersion) qb.andWhere('a.engine_version = :ev', { ev: q.engineVersion });
  if (q.from) qb.andWhere('a.window_start >= :from', { from: new Date(q.from) });
  if (q.to) qb.andWhere('a.window_start <= :to', { to: new Date(q.to) });
  const total = await qb.getCount();
  const dir = q.order === 'asc' ? 'ASC' : 'DESC';
  qb.orderBy(sortColumn(SORTABLE, q.sort, 'a.window_start'), dir).addOrderBy('a.id', dir);
  const rows = (await qb
    .offset((q.page - 1) * q.pageSize)
    .limit(q.pageSize)
    .getRawMany()) as SummaryRaw[];
  const statuses = await deliveryStatuses(
    ds,
    rows.map((r) => r.id),
  );
  return { items: rows.map((r) => toSummary(r, statuses.get(r.id) ?? null)), page: q.page, pageSize: q.pageSize, total };
}

/** One assessment with what a reviewer plots: the window's samples on the result's time base. */
export async function getAssessment(ds: DataSource, id: string, readBy: ChangeBy) {
  const raw = (await summaryQuery(ds)
    .addSelect('a.result', 'result')
    .addSelect('a.entered_in_error_by', 'enteredInErrorBy')
    .addSelect('a.entered_in_error_reason', 'enteredInErrorReason')
    .addSelect('a.tidal_volume_challenge', 'tidalVolumeChallenge')
    .where('a.id = :id', { id })
    .getRawOne()) as
    (SummaryRaw & { result: string; enteredInErrorBy: string | null; enteredInErrorReason: string | null; tidalVolumeChallenge: string | null }) | undefined;
  if (!raw) throw notFound(`Assessment ${id}`);
  // Patient data: every read of an assessment's detail (waveform, result) is audited.
  await recordAudit(ds.manager, {
    principal: readBy.principal,
    action: 'assessment.read',
    entityType: 'assessment',
    entityId: id,
    requestId: readBy.requestId,
  });
  const statuses = await deliveryStatuses(ds, [id]);
  const { input } = await assembleWindow(ds, raw.monitorId, new Date(raw.windowStart), new Date(raw.windowEnd));
  const waveform: Waveform = {
    startTime: new Date(raw.windowStart).toISOString(),
    channels: input.channels.map((c) => ({
      role: c.role,
      unit: c.unit,
      sampleRate: c.sampleRate,
      samples: Array.from(c.samples, (v) => (Number.isFinite(v) ? v : null)),
    })),
  };
  const observations: Record<string, unknown>[] = [];
  for (const p of assessmentEvents(ds).observations) observations.push(...(await p(ds, id)));
  return {
    assessment: {
      ...toSummary(raw, statuses.get(id) ?? null),
      enteredInErrorAt: raw.enteredInErrorAt ? new Date(raw.enteredInErrorAt).toISOString() : null,
      enteredInErrorBy: raw.enteredInErrorBy,
      enteredInErrorReason: raw.enteredInErrorReason,
      result: typeof raw.result === 'string' ? (JSON.parse(raw.result) as Record<string, unknown>) : raw.result,
      tidalVolumeChallenge: raw.tidalVolumeChallenge ? (JSON.parse(raw.tidalVolumeChallenge) as Record<string, unknown>) : null,
    },
    waveform,
    observations,
  };
}

/** Marks a result entered in error (reviewer), audited; delivery hooks send the amendment. */
export async function markInError(ds: DataSource, id: string, reason: string, by: ChangeBy) {
  await ds.transaction(async (m) => {
    const row = await m.findOne(AssessmentRow, { where: { id }, lock: { mode: 'pessimistic_write' } });
    if (!row) throw notFound(`Assessment ${id}`);
    if (row.enteredInErrorAt) throw conflict(`Assessment ${id} was already marked in error on ${row.enteredInErrorAt.toISOString()}.`);
    const who = by.principal?.kind === 'user' ? by.principal.username : 'system';
    row.enteredInErrorAt = new Date();
    row.enteredInErrorBy = who;
    row.enteredInErrorReason = reason;
    await m.update(AssessmentRow, { id }, { enteredInErrorAt: row.enteredInErrorAt, enteredInErrorBy: who, enteredInErrorReason: reason });
    await recordAudit(m, {
      principal: by.principal,
      action: 'assessment.mark-in-error',
      entityType: 'assessment',
      entityId: id,
      before: { enteredInError: false },
      after: { enteredInError: true, reason },
      requestId: by.requestId,
    });
    for (const hook of assessmentEvents(ds).markedInError) await hook(m, row, reason);
  });
  return (await listAssessmentsById(ds, id))!;
}

async function listAssessmentsById(ds: DataSource, id: string): Promise<AssessmentSummary | null> {
  const raw = (await summaryQuery(ds).where('a.id = :id', { id }).getRawOne()) as SummaryRaw | undefined;
  if (!raw) return null;
  return toSummary(raw, (await deliveryStatuses(ds, [id])).get(id) ?? null);
}
