/**
 * Sends claimed outbox rows to the EHR's FHIR API: builds the Observation on the first send
 * (patient context, Device), keeps it as the row's payload, then conditional create, singly or
 * in transaction Bundles. Returns what to record; the worker writes it.
 */
import type { DataSource } from 'typeorm';
import { In } from 'typeorm';
import { AssessmentRow } from '../assessments/assessment.entity';
import { BedRow, MonitorProfileRow, MonitorRow } from '../devices/device.entities';
import { backoffDelayMs } from './backoff';
import type { CodeMap } from './code-map';
import type { DeliveryConfig } from './delivery.config';
import { DeliveryRow } from './delivery.entities';
import type { DeviceSync } from './device-sync';
import { errorText, type EhrClient } from './ehr-client';
import type { Bundle, Observation } from './fhir-types';
import { parseResourceLocation } from './fhir-location';
import { enteredInErrorAmendment, ifNoneExistQuery } from './observation-builder';
import { buildRowObservation } from './row-observation';
import type { AttemptResult } from './outbox';
import type { PatientContextResolver } from './patient-context';
import { outcomeSummary, type SendOutcome } from './send-outcome';

export interface DeliveryPolicy {
  observationStatus: DeliveryConfig['observationStatus'];
  notValidPolicy: DeliveryConfig['notValidPolicy'];
}

interface Prepared {
  row: DeliveryRow;
  payload: Observation;
  patientRef: string | null;
  encounterRef?: string | null;
  patientName?: string | null;
  patientMrn?: string | null;
}

export interface PassReport {
  results: AttemptResult[];
  answered: number;
  failed: number;
  lastError: string | null;
  configurationError: string | null;
  /** Rows not sent because the claim no longer held them (fencing refusals before a send). */
  fenced?: number;
}

/** FHIR R4 transaction Bundle of conditional creates (request.ifNoneExist on each identifier). */
export function transactionBundle(codes: CodeMap, items: { resource: Observation; identifier: string }[]): Bundle {
  return {
    resourceType: 'Bundle',
    type: 'transaction',
    entry: items.map((p) => ({
      resource: p.resource as unknown as Record<string, unknown>,
      request: {
        method: 'POST',
        url: 'Observation',
        ifNoneExist: decodeURIComponent(ifNoneExistQuery({ system: codes.identifierSystems.observation, value: p.identifier })),
      },
    })),
  };
}

export class FhirDestination {
  constructor(
    private readonly ds: DataSource,
    private readonly ehr: EhrClient,
    private readonly contexts: PatientContextResolver,
    private readonly devices: DeviceSync,
    private readonly codes: CodeMap,
    private readonly cfg: DeliveryConfig,
    /** Run-time policy (site settings an admin may change); read once per pass. */
    private readonly policy: () => Promise<DeliveryPolicy>,
  ) {}

  private current: DeliveryPolicy = { observationStatus: 'preliminary', notValidPolicy: 'data-absent' };

  async process(rows: DeliveryRow[]): Promise<PassReport> {
    const report: PassReport = { results: [], answered: 0, failed: 0, lastError: null, configurationError: null };
    this.current = await this.policy();
    const ready: Prepared[] = [];
    const started = performance.now();
    const assessments = await this.load(rows);
    for (const row of rows) {
      try {
        const p = row.kind === 'amend' ? await this.prepareAmend(row, report) : await this.prepareCreate(row, assessments, report);
        if (p) ready.push(p);
      } catch (err) {
        // The EHR could not be asked for context or the Device: a transient failure of the destination.
        this.apply(
          report,
          row,
          { kind: 'retryable', httpStatus: null, response: null, detail: `preparing the message failed: ${errorText(err)}` },
          'single',
          performance.now() - started,
        );
      }
    }
    const creates = ready.filter((p) => p.row.kind === 'create');
    const amends = ready.filter((p) => p.row.kind === 'amend');
    if (this.cfg.bundleSize > 1 && creates.length > 1) {
      for (let i = 0; i < creates.length; i += this.cfg.bundleSize) await this.sendBundle(creates.slice(i, i + this.cfg.bundleSize), report);
    } else {
      await this.sendSingly(creates, report);
    }
    await this.sendSingly(amends, report);
    return report;
  }

  private async load(rows: DeliveryRow[]) {
    const ids = [...new Set(rows.filter((r) => r.kind === 'create' && !r.payload).map((r) => r.assessmentId))];
    const assessments = ids.length ? await this.ds.getRepository(AssessmentRow).findBy({ id: In(ids) }) : [];
    const bedIds = [...new Set(assessments.map((a) => a.bedId).filter((x): x is string => !!x))];
    const monitorIds = [...new Set(assessments.map((a) => a.monitorId))];
    const beds = bedIds.length ? await this.ds.getRepository(BedRow).findBy({ id: In(bedIds) }) : [];
    const monitors = monitorIds.length ? await this.ds.getRepository(MonitorRow).findBy({ id: In(monitorIds) }) : [];
    const profileIds = [...new Set(monitors.map((m) => m.profileId).filter((x): x is string => !!x))];
    const profiles = profileIds.length ? await this.ds.getRepository(MonitorProfileRow).findBy({ id: In(profileIds) }) : [];
    return {
      assessment: new Map(assessments.map((a) => [a.id, a])),
      bed: new Map(beds.map((b) => [b.id, b])),
      monitor: new Map(monitors.map((m) => [m.id, m])),
      profile: new Map(profiles.map((p) => [p.id, p])),
    };
  }

  private waitForContext(report: PassReport, row: DeliveryRow, detail: string): void {
    report.results.push({
      row,
      status: 'waiting-context',
      nextAttemptAt: new Date(Date.now() + this.cfg.patientContext.retrySeconds * 1000),
      countsAsTry: false,
      httpStatus: null,
      outcome: 'waiting-context',
      detail,
      response: null,
      mode: 'single',
      durationMs: 0,
    });
  }

  private async prepareCreate(row: DeliveryRow, maps: Awaited<ReturnType<FhirDestination['load']>>, report: PassReport): Promise<Prepared | null> {
    if (row.payload) return { row, payload: row.payload as Observation, patientRef: row.patientRef };
    const a = maps.assessment.get(row.assessmentId);
    if (!a) throw new Error(`assessment ${row.assessmentId} is gone`);
    const bed = a.bedId ? maps.bed.get(a.bedId) : undefined;
    if (!bed) {
      this.waitForContext(report, row, 'no patient context: the monitor was not at a bed during this window');
      return null;
    }
    const answer = await this.contexts.resolveAt(bed.locationIdentifier, a.windowStart, a.windowEnd);
    if (answer.kind === 'none') {
      // Patient safety: no context in force for the whole window (nobody, ambiguous or undated) → hold, never guess.
      this.waitForContext(report, row, `no patient context: ${answer.reason}`);
      return null;
    }
    const context = answer.context;
    const monitor = maps.monitor.get(a.monitorId);
    const profile = monitor?.profileId ? maps.profile.get(monitor.profileId) : undefined;
    const deviceId = monitor
      ? await this.devices.ensure({
          identifier: monitor.identifier,
          manufacturer: profile?.manufacturer ?? null,
          model: profile?.model ?? null,
          locationId: context.locationId,
        })
      : null;
    const built = buildRowObservation({
      indexName: row.indexName,
      assessment: a,
      context,
      deviceId,
      status: this.current.observationStatus,
      notValidPolicy: this.current.notValidPolicy,
      issued: new Date(),
      codes: this.codes,
    });
    if (built.kind === 'withheld') {
      report.results.push({
        row,
        status: 'withheld',
        nextAttemptAt: new Date(),
        countsAsTry: false,
        httpStatus: null,
        outcome: 'withheld',
        detail: built.reason,
        response: null,
        mode: 'single',
        durationMs: 0,
      });
      return null;
    }
    return {
      row,
      payload: built.resource,
      patientRef: `Patient/${context.patientId}`,
      encounterRef: `Encounter/${context.encounterId}`,
      patientName: context.patientName,
      patientMrn: context.patientMrn,
    };
  }

  private async prepareAmend(row: DeliveryRow, report: PassReport): Promise<Prepared | null> {
    if (row.payload) return { row, payload: row.payload as Observation, patientRef: row.patientRef };
    const create = await this.ds
      .getRepository(DeliveryRow)
      .findOneBy({ assessmentId: row.assessmentId, destinationId: row.destinationId, indexName: row.indexName, kind: 'create' });
    const a = await this.ds.getRepository(AssessmentRow).findOneBy({ id: row.assessmentId });
    const settle = (status: 'pending' | 'discarded' | 'failed', outcome: string, detail: string, later = 5000) =>
      report.results.push({
        row,
        status,
        nextAttemptAt: new Date(Date.now() + later),
        countsAsTry: false,
        httpStatus: null,
        outcome,
        detail,
        response: null,
        mode: 'single',
        durationMs: 0,
      });
    if (!create || !a) {
      settle('failed', 'original-not-found', 'the original delivery or its assessment is gone: nothing here says what to amend');
      return null;
    }
    if (create.status === 'pending' || create.status === 'waiting-context') {
      settle('pending', 'waiting-original', 'the original is not delivered yet');
      return null;
    }
    const identifier = { system: this.codes.identifierSystems.observation, value: create.identifier };
    // The EHR's id: kept from the create's answer, else found by identifier (a 200 without
    // Location, or an attempt that timed out but did reach the EHR).
    let serverId = create.serverId;
    let original = create.payload as Observation | null;
    if (!serverId) {
      const ids = await this.ehr.findObservationIds(identifier);
      if (ids.length > 1) {
        settle('failed', 'original-ambiguous', `${ids.length} Observations at the EHR hold identifier ${identifier.value}: amend by hand (${ids.join(', ')})`);
        return null;
      }
      serverId = ids[0] ?? null;
      if (serverId && !original) original = (await this.ehr.read('Observation', serverId)) as unknown as Observation;
    }
    if (!serverId || !original) {
      if (create.status === 'delivered') {
        // Never discarded: the EHR accepted it, so a wrong value may stand there. An operator must act (alert).
        settle(
          'failed',
          'original-not-found',
          `the EHR accepted the original but it cannot be found (no id in its answer, none by identifier ${identifier.value}): the value may still stand in the chart`,
        );
      } else {
        settle('discarded', 'nothing-to-amend', `never delivered, and the EHR has no Observation with identifier ${identifier.value}`);
      }
      return null;
    }
    const payload = enteredInErrorAmendment(
      original,
      serverId,
      a.enteredInErrorBy ?? 'a reviewer',
      a.enteredInErrorReason ?? 'no reason given',
      a.enteredInErrorAt ?? new Date(),
    );
    return { row, payload, patientRef: create.patientRef };
  }

  private async sendSingly(items: Prepared[], report: PassReport): Promise<void> {
    let next = 0;
    const lane = async () => {
      while (next < items.length) {
        const p = items[next++]!;
        const t0 = performance.now();
        const outcome =
          p.row.kind === 'amend'
            ? await this.ehr.updateObservation(p.payload as Observation & { id: string })
            : await this.ehr.createObservation(p.payload, ifNoneExistQuery({ system: this.codes.identifierSystems.observation, value: p.row.identifier }));
        this.apply(report, p.row, outcome, 'single', performance.now() - t0, p);
      }
    };
    await Promise.all(Array.from({ length: Math.min(this.cfg.concurrency, items.length) }, lane));
  }

  /** FHIR R4 transaction: all or nothing. A 400/422 for the whole bundle is retried entry by entry to find the bad one. */
  private async sendBundle(items: Prepared[], report: PassReport): Promise<void> {
    const bundle = transactionBundle(
      this.codes,
      items.map((p) => ({ resource: p.payload, identifier: p.row.identifier })),
    );
    const t0 = performance.now();
    const answer = await this.ehr.transaction(bundle);
    const ms = performance.now() - t0;
    if (!answer.ok) {
      if (answer.outcome.kind === 'rejected' && items.length > 1) return this.sendSingly(items, report);
      for (const p of items) this.apply(report, p.row, answer.outcome, 'bundle', ms / items.length, p);
      return;
    }
    items.forEach((p, i) => {
      const resp = answer.bundle.entry?.[i]?.response;
      const status = Number.parseInt(resp?.status ?? '', 10);
      const serverId =
        parseResourceLocation(resp?.location, 'Observation')?.id ??
        (typeof answer.bundle.entry?.[i]?.resource?.id === 'string' ? String(answer.bundle.entry[i]!.resource!.id) : null);
      const outcome: SendOutcome =
        status >= 200 && status < 300
          ? { kind: 'delivered', httpStatus: status, serverId, created: status === 201, response: null }
          : {
              kind: 'rejected',
              httpStatus: Number.isFinite(status) ? status : null,
              response: resp?.outcome ?? null,
              detail: `bundle entry answered ${resp?.status ?? 'nothing'}`,
            };
      this.apply(report, p.row, outcome, 'bundle', ms / items.length, p);
    });
  }

  private apply(report: PassReport, row: DeliveryRow, o: SendOutcome, mode: 'single' | 'bundle', durationMs: number, p?: Prepared): void {
    const now = Date.now();
    const base = {
      row,
      httpStatus: o.httpStatus,
      response: o.response,
      mode,
      durationMs,
      ...(p
        ? { payload: p.payload as object, patientRef: p.patientRef, encounterRef: p.encounterRef, patientName: p.patientName, patientMrn: p.patientMrn }
        : {}),
    };
    if (o.kind === 'delivered') {
      report.answered++;
      report.results.push({
        ...base,
        status: 'delivered',
        nextAttemptAt: new Date(now),
        countsAsTry: true,
        outcome: o.created ? 'created' : 'delivered',
        detail: o.created ? 'created' : 'accepted (already there or updated)',
        serverId: o.serverId ?? row.serverId,
      });
      return;
    }
    const summary = outcomeSummary(o.response);
    const detail = summary ? `${o.detail}: ${summary}` : o.detail;
    if (o.kind === 'rejected') {
      report.answered++;
      report.results.push({ ...base, status: 'failed', nextAttemptAt: new Date(now), countsAsTry: true, outcome: 'rejected', detail });
      return;
    }
    report.failed++;
    report.lastError = detail;
    if (o.kind === 'auth') report.configurationError = `${detail}: check the client id, secret and scopes the EHR gave Ebbgate`;
    const tries = row.tries + 1;
    const exhausted = tries >= this.cfg.retry.limit;
    const delay = Math.max(backoffDelayMs(tries, this.cfg.retry), o.kind === 'retryable' ? (o.retryAfterMs ?? 0) : 0);
    report.results.push({
      ...base,
      status: exhausted ? 'failed' : 'pending',
      nextAttemptAt: new Date(now + delay),
      countsAsTry: true,
      outcome: o.kind,
      detail: exhausted ? `${detail} (gave up after ${tries} attempts)` : detail,
    });
  }
}
