/**
 * The delivery worker: per destination, unless paused or its circuit is open, claim due rows,
 * send them, record every attempt, update the destination's health. Circuit breaker: after
 * `failureThreshold` consecutive failures the circuit opens for `openSeconds`, then one row is
 * tried (half-open); success closes it, failure opens it again (common practice).
 */
import type { Logger } from 'pino';
import type { DataSource } from 'typeorm';
import { In, IsNull, Not } from 'typeorm';
import { AssessmentRow } from '../assessments/assessment.entity';
import type { BackgroundService } from '../app-context';
import { PollLoop } from '../lib/poll-loop';
import type { DeliveryConfig } from './delivery.config';
import { DeliveryRow, DestinationRow } from './delivery.entities';
import type { PassReport } from './fhir-destination';
import { claimDueFenced, ensureAmendRow, recordAttempts, recordDestinationHealth, renewLease } from './outbox';

export interface DestinationHandler {
  process(rows: DeliveryRow[]): Promise<PassReport>;
}

/** What a pass tells the metrics besides its attempts. */
export interface PassFacts {
  claimsExpired: number;
  fencingRefusals: number;
}

export class DeliveryWorker implements BackgroundService {
  readonly name = 'delivery-worker';
  private readonly loop: PollLoop;

  constructor(
    private readonly ds: DataSource,
    private readonly handlers: Map<string, DestinationHandler>,
    private readonly cfg: DeliveryConfig,
    private readonly logger: Logger,
    /** Told about every recorded pass (metrics). */
    private readonly onPass?: (destinationId: string, report: PassReport, facts: PassFacts) => void,
  ) {
    this.loop = new PollLoop(
      async () => (await this.runOnce()) > 0,
      () => cfg.pollMs,
      (err) => logger.error({ err }, 'delivery pass failed'),
    );
  }

  async start(): Promise<void> {
    this.loop.start();
  }

  async stop(): Promise<void> {
    await this.loop.stop();
  }

  /** One pass over every destination; returns the number of rows handled. */
  async runOnce(): Promise<number> {
    let handled = 0;
    const destinations = await this.ds.getRepository(DestinationRow).find();
    for (const d of destinations) {
      const handler = this.handlers.get(d.id);
      if (!handler || d.paused) continue;
      let limit = this.cfg.claimBatch;
      if (d.circuitState === 'open') {
        const openFor = Date.now() - (d.circuitOpenedAt?.getTime() ?? 0);
        if (openFor < this.cfg.circuit.openSeconds * 1000) continue;
        await this.ds.getRepository(DestinationRow).update({ id: d.id, circuitState: 'open' }, { circuitState: 'half-open', updatedAt: new Date() });
        limit = 1;
      } else if (d.circuitState === 'half-open') {
        limit = 1;
      }
      const leaseMs = this.cfg.leaseSeconds * 1000;
      const claim = await claimDueFenced(this.ds, d.id, limit, leaseMs);
      const rows = claim.rows;
      if (!rows.length) continue;
      handled += rows.length;
      if (claim.expired) this.logger.warn({ destination: d.id, rows: claim.expired }, 'claimed rows whose earlier claim had expired');
      // Renew the lease while the pass works, so a slow EHR does not let another process take the rows.
      const renew = setInterval(
        () => void renewLease(this.ds, claim.id, leaseMs).catch((err) => this.logger.warn({ err }, 'lease renewal failed')),
        Math.max(50, leaseMs / 3),
      );
      let report: PassReport;
      try {
        report = await handler.process(rows);
      } finally {
        clearInterval(renew);
      }
      const refusals = (await recordAttempts(this.ds, report.results)) + (report.fenced ?? 0);
      if (refusals) this.logger.warn({ destination: d.id, refusals }, 'fencing: results of a claim that no longer held its rows were not applied');
      await recordDestinationHealth(this.ds, d.id, report, this.cfg.circuit);
      this.onPass?.(d.id, report, { claimsExpired: claim.expired, fencingRefusals: refusals });
      if (report.failed) this.logger.warn({ destination: d.id, failed: report.failed, error: report.lastError }, 'delivery attempts failed');
      await this.amendLateErrors(report);
    }
    return handled;
  }

  /** A result marked in error while its first send was in flight still gets its amendment. */
  private async amendLateErrors(report: PassReport): Promise<void> {
    const delivered = report.results.filter((r) => r.status === 'delivered' && r.row.kind === 'create');
    if (!delivered.length) return;
    const flagged = await this.ds.getRepository(AssessmentRow).find({
      select: { id: true },
      where: { id: In([...new Set(delivered.map((r) => r.row.assessmentId))]), enteredInErrorAt: Not(IsNull()) },
    });
    if (!flagged.length) return;
    const ids = new Set(flagged.map((a) => a.id));
    await this.ds.transaction(async (m) => {
      for (const r of delivered.filter((x) => ids.has(x.row.assessmentId))) {
        const fresh = await m.getRepository(DeliveryRow).findOneBy({ id: r.row.id });
        if (fresh) await ensureAmendRow(m, fresh);
      }
    });
  }
}
