/**
 * The outbox tables: rows are added in the same transaction as the assessment they deliver,
 * claimed with FOR UPDATE SKIP LOCKED, and leased by pushing next_attempt_at forward, so a worker
 * that dies leaves its rows due again after the lease (then conditional create keeps it exactly once).
 * Each claim writes a fresh fencing token (claim_id); the holder's every state change is
 * conditional on it, and the holder renews the lease while it works, so a worker whose lease ran
 * out changes nothing (and, for HL7 v2, does not send: there is no conditional create there).
 */
import { randomUUID } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { In } from 'typeorm';
import type { AnalysisResult, TidalVolumeChallengeResult } from '@ebbgate/shared/analysis';
import { CHALLENGE_DELIVERY, challengeIdentifier } from '../analysis/challenge-observation';
import type { AssessmentRow } from '../assessments/assessment.entity';
import { isRetryableLockError } from '../db/errors';
import { DELIVERED_INDICES, type CodeMap } from './code-map';
import type { DeliveryConfig } from './delivery.config';
import { DeliveryAttemptRow, DeliveryRow, DestinationRow, type DeliveryStatus, type DestinationKind } from './delivery.entities';
import { observationIdentifier } from './observation-builder';
import { challengeWithheldReason } from './row-observation';

export interface DestinationSpec {
  id: string;
  name: string;
  kind: DestinationKind;
}

/** Makes sure every configured destination has its row (state survives restarts). */
export async function syncDestinations(ds: DataSource, specs: DestinationSpec[]): Promise<void> {
  const now = new Date();
  for (const s of specs) {
    await ds.query(
      `INSERT INTO destination (id, name, kind, paused, circuit_state, consecutive_failures, updated_at) VALUES (?, ?, ?, 0, 'closed', 0, ?)
       ON DUPLICATE KEY UPDATE name = VALUES(name), kind = VALUES(kind)`,
      [s.id, s.name, s.kind, now],
    );
  }
}

/** Whether a result goes out at all under the not-valid policy (decided once, when queued). */
export function withheldReason(result: AnalysisResult, index: (typeof DELIVERED_INDICES)[number], policy: DeliveryConfig['notValidPolicy']): string | null {
  if (policy !== 'withhold') return null;
  const iv = result.indices[index];
  const verdict = result.indexVerdicts[index] ?? result.verdict;
  if (iv.value === null) return `not computable: ${iv.notComputableReason ?? 'no value'}`;
  if (verdict === 'not-valid') return 'not valid: withheld by setting';
  return null;
}

/** Queues one row per index per destination for a newly stored assessment. */
export async function enqueueAssessment(
  m: EntityManager,
  a: AssessmentRow,
  destinations: string[],
  codes: CodeMap,
  policy: DeliveryConfig['notValidPolicy'],
): Promise<void> {
  const result = a.result as AnalysisResult;
  const now = new Date();
  const rows: Partial<DeliveryRow>[] = [];
  for (const destinationId of destinations) {
    for (const index of DELIVERED_INDICES) {
      const withheld = withheldReason(result, index, policy);
      rows.push({
        assessmentId: a.id,
        destinationId,
        indexName: index,
        kind: 'create',
        status: withheld ? 'withheld' : 'pending',
        identifier: observationIdentifier(codes, a.id, index).value,
        payload: null,
        serverId: null,
        patientRef: null,
        tries: 0,
        attemptCount: 0,
        nextAttemptAt: now,
        lastHttpStatus: null,
        lastError: withheld,
        discardReason: null,
        discardedBy: null,
        createdAt: now,
        updatedAt: now,
        deliveredAt: null,
      });
    }
    // A tidal volume challenge this assessment completed travels as one more Observation.
    const challenge = a.tidalVolumeChallenge as TidalVolumeChallengeResult | null;
    if (challenge) {
      const withheld = challengeWithheldReason(challenge, policy);
      rows.push({
        assessmentId: a.id,
        destinationId,
        indexName: CHALLENGE_DELIVERY,
        kind: 'create',
        status: withheld ? 'withheld' : 'pending',
        identifier: challengeIdentifier(codes, a.id).value,
        payload: null,
        serverId: null,
        patientRef: null,
        tries: 0,
        attemptCount: 0,
        nextAttemptAt: now,
        lastHttpStatus: null,
        lastError: withheld,
        discardReason: null,
        discardedBy: null,
        createdAt: now,
        updatedAt: now,
        deliveredAt: null,
      });
    }
  }
  if (rows.length) await m.createQueryBuilder().insert().into(DeliveryRow).values(rows).orIgnore().execute();
}

/**
 * Outbox transactions run READ COMMITTED: no gap locks, so a worker's range scan never blocks
 * another's updates of rows just past the range (REPEATABLE READ next-key locks deadlock there);
 * a deadlock that still happens is retried.
 */
async function outboxTransaction<T>(ds: DataSource, work: (m: EntityManager) => Promise<T>): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await ds.transaction('READ COMMITTED', work);
    } catch (err) {
      if (attempt >= 5 || !isRetryableLockError(err)) throw err;
      await new Promise((r) => setTimeout(r, 5 * attempt + Math.random() * 10));
    }
  }
}

export interface Claim {
  id: string;
  rows: DeliveryRow[];
  /** Rows whose previous claim ran out without its holder recording anything (a dead or slow worker). */
  expired: number;
}

/** Claims due rows of one destination: SKIP LOCKED so parallel workers never take the same row. */
export async function claimDue(ds: DataSource, destinationId: string, limit: number, leaseMs: number): Promise<DeliveryRow[]> {
  return (await claimDueFenced(ds, destinationId, limit, leaseMs)).rows;
}

/** As claimDue, with the claim's fencing token and the count of expired earlier claims. */
export async function claimDueFenced(ds: DataSource, destinationId: string, limit: number, leaseMs: number): Promise<Claim> {
  const claimId = randomUUID();
  return outboxTransaction(ds, async (m) => {
    const now = new Date();
    const rows = await m
      .getRepository(DeliveryRow)
      .createQueryBuilder('d')
      .where('d.destination_id = :destinationId', { destinationId })
      .andWhere('d.status IN (:...statuses)', { statuses: ['pending', 'waiting-context'] })
      .andWhere('d.next_attempt_at <= :now', { now })
      .orderBy('d.next_attempt_at', 'ASC')
      .addOrderBy('d.id', 'ASC')
      .limit(limit)
      .setLock('pessimistic_write')
      .setOnLocked('skip_locked')
      .getMany();
    const expired = rows.filter((r) => r.claimId !== null).length;
    if (rows.length) {
      await m.update(DeliveryRow, { id: In(rows.map((r) => r.id)) }, { nextAttemptAt: new Date(now.getTime() + leaseMs), claimId, claimedAt: now });
      for (const r of rows) Object.assign(r, { claimId, claimedAt: now });
    }
    return { id: claimId, rows, expired };
  });
}

/** Renews the lease of the rows this claim still holds; returns how many it holds. */
export async function renewLease(ds: DataSource, claimId: string, leaseMs: number): Promise<number> {
  const res = (await ds.query(`UPDATE delivery SET next_attempt_at = ? WHERE claim_id = ? AND status IN ('pending','waiting-context')`, [
    new Date(Date.now() + leaseMs),
    claimId,
  ])) as { affectedRows?: number };
  return res.affectedRows ?? 0;
}

/**
 * Fencing check before an irrevocable step (an HL7 v2 send): true only if this claim still holds
 * the row, and the lease is pushed forward so it cannot run out during the step.
 */
export async function stillHeld(ds: DataSource, rowId: string, claimId: string, leaseMs: number): Promise<boolean> {
  const res = (await ds.query(`UPDATE delivery SET next_attempt_at = ? WHERE id = ? AND claim_id = ? AND status IN ('pending','waiting-context')`, [
    new Date(Date.now() + leaseMs),
    rowId,
    claimId,
  ])) as { affectedRows?: number };
  return (res.affectedRows ?? 0) === 1;
}

export interface AttemptResult {
  row: DeliveryRow;
  /** New status; for an unfinished row pending or waiting-context. */
  status: DeliveryStatus;
  nextAttemptAt: Date;
  countsAsTry: boolean;
  httpStatus: number | null;
  outcome: string;
  detail: string | null;
  response: unknown;
  payload?: object | null;
  serverId?: string | null;
  patientRef?: string | null;
  encounterRef?: string | null;
  patientName?: string | null;
  patientMrn?: string | null;
  mode: 'single' | 'bundle' | 'mllp';
  durationMs: number;
}

/** `CASE id WHEN ? THEN ? … ELSE <fallback> END` for a per-row value in one bulk UPDATE. */
function caseOf(rows: AttemptResult[], value: (r: AttemptResult) => unknown, fallback: string, params: unknown[]): string {
  const parts = rows.map((r) => {
    params.push(r.row.id, value(r));
    return 'WHEN ? THEN ?';
  });
  return `CASE id ${parts.join(' ')} ELSE ${fallback} END`;
}

async function bulkUpdate(m: EntityManager, rows: AttemptResult[], at: Date, onlyOpen: boolean): Promise<string[]> {
  if (!rows.length) return [];
  const p: unknown[] = [];
  const sets = [
    `status = ${caseOf(rows, (r) => r.status, 'status', p)}`,
    `next_attempt_at = ${caseOf(rows, (r) => r.nextAttemptAt, 'next_attempt_at', p)}`,
    `last_http_status = ${caseOf(rows, (r) => r.httpStatus, 'last_http_status', p)}`,
    `last_error = ${caseOf(rows, (r) => (r.status === 'delivered' ? null : r.detail), 'last_error', p)}`,
    `tries = tries + ${caseOf(rows, (r) => (r.countsAsTry ? 1 : 0), '0', p)}`,
  ];
  const optional = (col: string, get: (r: AttemptResult) => unknown) => {
    const some = rows.filter((r) => get(r) !== undefined);
    if (some.length) sets.push(`${col} = ${caseOf(some, get, col, p)}`);
  };
  optional('payload', (r) => (r.payload === undefined ? undefined : r.payload === null ? null : JSON.stringify(r.payload)));
  optional('server_id', (r) => r.serverId);
  optional('patient_ref', (r) => r.patientRef);
  optional('encounter_ref', (r) => r.encounterRef);
  optional('patient_name', (r) => r.patientName);
  optional('patient_mrn', (r) => r.patientMrn);
  optional('delivered_at', (r) => (r.status === 'delivered' ? at : undefined));
  // The claim is released: a row found claimed later is one whose holder died or overran its lease.
  sets.push('attempt_count = attempt_count + 1', 'updated_at = ?', 'claim_id = NULL');
  p.push(at);
  // Fencing: only rows this claim still holds change (a row claimed by nobody, as in tests, too).
  const ids = rows.map((r) => r.row.id);
  const claimIds = [...new Set(rows.map((r) => r.row.claimId ?? null))];
  if (claimIds.length !== 1) throw new Error('recordAttempts: one claim at a time');
  const claim = claimIds[0];
  p.push(ids);
  let where = `WHERE id IN (?)${onlyOpen ? " AND status IN ('pending','waiting-context')" : ''}`;
  if (claim) {
    where += ' AND claim_id = ?';
    p.push(claim);
  }
  // Which rows the claim still held (read under the same locks the UPDATE takes).
  const held = claim
    ? ((await m.query(`SELECT id FROM delivery WHERE id IN (?) AND claim_id = ? FOR UPDATE`, [ids, claim])) as { id: string | number }[]).map((r) =>
        String(r.id),
      )
    : ids.map(String);
  await m.query(`UPDATE delivery SET ${sets.join(', ')} ${where}`, p);
  return held;
}

/**
 * Writes a batch of attempts in one transaction (one INSERT, two bulk UPDATEs). A row that someone
 * discarded while it was in flight keeps that status unless it was in fact delivered. Returns the
 * number of fencing refusals: results whose claim no longer held the row (nothing changed there
 * but the attempt itself, which is kept as evidence).
 */
export async function recordAttempts(ds: DataSource, results: AttemptResult[]): Promise<number> {
  if (!results.length) return 0;
  const at = new Date();
  return outboxTransaction(ds, async (m) => {
    await m.insert(
      DeliveryAttemptRow,
      results.map((r) => ({
        deliveryId: r.row.id,
        at,
        durationMs: Math.round(r.durationMs),
        httpStatus: r.httpStatus,
        outcome: r.outcome,
        detail: r.detail,
        response: (r.response ?? null) as object | null,
        mode: r.mode,
      })),
    );
    const delivered = results.filter((r) => r.status === 'delivered');
    const heldDelivered = await bulkUpdate(m, delivered, at, false);
    const rest = results.filter((r) => r.status !== 'delivered');
    const heldRest = await bulkUpdate(m, rest, at, true);
    // The patient the EHR filed it under is shown (and filtered on) with the assessment itself.
    const filed = delivered.filter((r) => r.patientRef && heldDelivered.includes(String(r.row.id))).map((r) => r.row.id);
    if (filed.length) {
      await m.query(
        `UPDATE assessment a JOIN delivery d ON d.assessment_id = a.id
         SET a.patient_ref = d.patient_ref, a.patient_name = COALESCE(d.patient_name, a.patient_name), a.patient_mrn = COALESCE(d.patient_mrn, a.patient_mrn)
         WHERE d.id IN (?) AND d.patient_ref IS NOT NULL AND (a.patient_ref IS NULL OR a.patient_ref <> d.patient_ref OR a.patient_name IS NULL)`,
        [filed],
      );
    }
    // Refused: delivered results whose row is no longer this claim's, and open-row results likewise
    // (a row discarded meanwhile is not a refusal: its status was meant to win).
    const refusedDelivered = delivered.filter((r) => r.row.claimId && !heldDelivered.includes(String(r.row.id))).length;
    const refusedRest = rest.filter((r) => r.row.claimId && !heldRest.includes(String(r.row.id))).length;
    return refusedDelivered + refusedRest;
  });
}

/** Destination health after a pass: any answer from the EHR means it is up. */
export async function recordDestinationHealth(
  ds: DataSource,
  destinationId: string,
  pass: { answered: number; failed: number; lastError: string | null; configurationError: string | null },
  circuit: DeliveryConfig['circuit'],
): Promise<void> {
  const now = new Date();
  await outboxTransaction(ds, async (m) => {
    const d = await m.getRepository(DestinationRow).createQueryBuilder('d').where('d.id = :id', { id: destinationId }).setLock('pessimistic_write').getOne();
    if (!d) return;
    if (pass.answered > 0) {
      // It answered: not down. Failures in the same pass (an error rate) still count toward the circuit.
      Object.assign(d, { consecutiveFailures: pass.failed, downSince: null, lastSuccessAt: now });
      if (pass.failed === 0 || d.circuitState === 'half-open') Object.assign(d, { circuitState: 'closed', circuitOpenedAt: null });
      if (!pass.configurationError && pass.failed === 0) d.configurationError = null;
    } else if (pass.failed > 0) {
      d.consecutiveFailures += pass.failed;
      d.downSince ??= now;
    }
    if (
      pass.failed > 0 &&
      d.circuitState !== 'open' &&
      (d.circuitState === 'half-open' ? pass.answered === 0 : d.consecutiveFailures >= circuit.failureThreshold)
    ) {
      d.circuitState = 'open';
      d.circuitOpenedAt = now;
    }
    if (pass.failed > 0) {
      d.lastFailureAt = now;
      d.lastError = pass.lastError;
    }
    if (pass.configurationError) d.configurationError = pass.configurationError;
    d.updatedAt = now;
    await m.save(d);
  });
}

/**
 * Reviewer marked an assessment in error: amend what was delivered, stop what was not. A result
 * that was attempted but not confirmed (a timeout, a crash after sending) may still have reached
 * the EHR: it is stopped and gets an amendment too, which looks it up by identifier first.
 */
export async function markAssessmentInError(m: EntityManager, a: AssessmentRow): Promise<void> {
  const rows = await m.getRepository(DeliveryRow).find({ where: { assessmentId: a.id, kind: 'create' } });
  const now = new Date();
  for (const r of rows) {
    if (r.status === 'delivered') await ensureAmendRow(m, r, now);
    else if (r.status === 'pending' || r.status === 'waiting-context' || r.status === 'failed') {
      await m.update(
        DeliveryRow,
        { id: r.id },
        { status: 'discarded', discardReason: 'entered in error before delivery', discardedBy: a.enteredInErrorBy, updatedAt: now },
      );
      if (r.attemptCount > 0 && r.status !== 'waiting-context') await ensureAmendRow(m, r, now);
    }
  }
}

/** Queues the amendment of a create row; one that was set aside earlier (nothing to amend then) is opened again. */
export async function ensureAmendRow(m: EntityManager, create: DeliveryRow, now = new Date()): Promise<void> {
  const params = [
    create.assessmentId,
    create.destinationId,
    create.indexName,
    create.identifier,
    create.serverId,
    create.patientRef,
    create.patientName ?? null,
    create.patientMrn ?? null,
    create.encounterRef ?? null,
    now,
    now,
    now,
  ];
  await m.query(
    `INSERT INTO delivery (assessment_id, destination_id, index_name, kind, status, identifier, payload, server_id, patient_ref, patient_name, patient_mrn, encounter_ref, tries, attempt_count, next_attempt_at, created_at, updated_at)
     VALUES (?, ?, ?, 'amend', 'pending', ?, NULL, ?, ?, ?, ?, ?, 0, 0, ?, ?, ?)
     ON DUPLICATE KEY UPDATE status = IF(status = 'discarded', 'pending', status), next_attempt_at = IF(status = 'pending', VALUES(next_attempt_at), next_attempt_at), discard_reason = IF(status = 'pending', NULL, discard_reason)`,
    params,
  );
}
