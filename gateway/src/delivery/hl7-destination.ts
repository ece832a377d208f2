/**
 * Optional second destination: the same results as HL7 v2 ORU^R01 over MLLP (HL7 v2
 * implementation guide, appendix C: 0x0B message 0x1C 0x0D). AA/CA delivered; AE/AR/CE/CR
 * rejected with the ACK kept; no ACK or no connection retried like an HTTP 503.
 */
import net from 'node:net';
import { frameMllp, MllpReader } from '@ebbgate/shared/hl7';
import type { DataSource } from 'typeorm';
import { In } from 'typeorm';
import { AssessmentRow } from '../assessments/assessment.entity';
import { BedRow, MonitorRow } from '../devices/device.entities';
import { backoffDelayMs } from './backoff';
import type { CodeMap } from './code-map';
import type { DeliveryConfig } from './delivery.config';
import type { DeliveryRow } from './delivery.entities';
import { errorText, type EhrClient } from './ehr-client';
import type { DeliveryPolicy, PassReport } from './fhir-destination';
import { stillHeld } from './outbox';
import { enteredInErrorAmendment } from './observation-builder';
import { buildRowObservation } from './row-observation';
import { buildOru } from './oru-message';
import type { PatientContextResolver } from './patient-context';

export function sendMllp(host: string, port: number, message: string, timeoutMs: number): Promise<string> {
  return new Promise((resolve, reject) => {
    const socket = net.connect({ host, port });
    const reader = new MllpReader({ maxFrameBytes: 1_048_576, headBytes: 4096 });
    const done = (err?: Error, ack?: string) => {
      socket.destroy();
      if (err) reject(err);
      else resolve(ack!);
    };
    socket.setTimeout(timeoutMs, () => done(new Error('no ACK before the timeout')));
    socket.on('error', (err) => done(err));
    socket.on('connect', () => socket.write(frameMllp(message)));
    socket.on('data', (chunk) => {
      for (const e of reader.push(chunk)) if (e.kind === 'frame') return done(undefined, e.message.toString('utf8'));
    });
  });
}

export function ackCode(ack: string): string | undefined {
  const msa = ack.split(/\r\n|\r|\n/).find((s) => s.startsWith('MSA'));
  return msa?.split('|')[1];
}

export class Hl7Destination {
  constructor(
    private readonly ds: DataSource,
    private readonly contexts: PatientContextResolver,
    private readonly ehr: EhrClient,
    private readonly codes: CodeMap,
    private readonly cfg: DeliveryConfig,
    private readonly policy: () => Promise<DeliveryPolicy>,
  ) {}

  async process(rows: DeliveryRow[]): Promise<PassReport> {
    const report: PassReport = { results: [], answered: 0, failed: 0, lastError: null, configurationError: null };
    const policy = await this.policy();
    const assessments = new Map(
      (await this.ds.getRepository(AssessmentRow).findBy({ id: In([...new Set(rows.map((r) => r.assessmentId))]) })).map((a) => [a.id, a]),
    );
    for (const row of rows) {
      const t0 = performance.now();
      const base = { row, mode: 'mllp' as const, response: null, httpStatus: null };
      try {
        const a = assessments.get(row.assessmentId)!;
        const bed = a.bedId ? await this.ds.getRepository(BedRow).findOneBy({ id: a.bedId }) : null;
        const answer = bed
          ? await this.contexts.resolveAt(bed.locationIdentifier, a.windowStart, a.windowEnd)
          : ({ kind: 'none', reason: 'the monitor was not at a bed during this window' } as const);
        if (!bed || answer.kind === 'none') {
          report.results.push({
            ...base,
            status: 'waiting-context',
            nextAttemptAt: new Date(Date.now() + this.cfg.patientContext.retrySeconds * 1000),
            countsAsTry: false,
            outcome: 'waiting-context',
            detail: `no patient context: ${answer.kind === 'none' ? answer.reason : 'no bed'}`,
            durationMs: 0,
          });
          continue;
        }
        const context = answer.context;
        let message = (row.payload as { message?: string } | null)?.message;
        if (!message) {
          const built = buildRowObservation({
            indexName: row.indexName,
            assessment: a,
            context,
            deviceId: null,
            status: policy.observationStatus,
            notValidPolicy: policy.notValidPolicy,
            issued: new Date(),
            codes: this.codes,
          });
          if (built.kind === 'withheld') {
            report.results.push({
              ...base,
              status: 'withheld',
              nextAttemptAt: new Date(),
              countsAsTry: false,
              outcome: 'withheld',
              detail: built.reason,
              durationMs: 0,
            });
            continue;
          }
          const obs =
            row.kind === 'amend'
              ? enteredInErrorAmendment(
                  built.resource,
                  row.identifier,
                  a.enteredInErrorBy ?? 'a reviewer',
                  a.enteredInErrorReason ?? '',
                  a.enteredInErrorAt ?? new Date(),
                )
              : built.resource;
          const mrn = context.patientMrn;
          const monitor = await this.ds.getRepository(MonitorRow).findOneBy({ id: a.monitorId });
          message = buildOru(this.codes, {
            observation: obs,
            controlId: `${row.identifier}-${row.kind}`.slice(0, 199),
            mrn,
            locationIdentifier: bed.locationIdentifier,
            sendingFacility: this.cfg.hl7.sendingFacility,
            receivingApplication: this.cfg.hl7.receivingApplication,
            monitorIdentifier: monitor?.identifier ?? null,
            at: new Date(),
          });
        }
        // Fencing: HL7 v2 has no conditional create, so a claim that no longer holds the row must not send.
        if (row.claimId && !(await stillHeld(this.ds, row.id, row.claimId, this.cfg.leaseSeconds * 1000))) {
          report.fenced = (report.fenced ?? 0) + 1;
          continue;
        }
        const ack = await sendMllp(this.cfg.hl7.host, this.cfg.hl7.port, message, this.cfg.requestTimeoutMs);
        const code = ackCode(ack);
        report.answered++;
        const ok = code === 'AA' || code === 'CA';
        report.results.push({
          ...base,
          response: { ack },
          payload: { message },
          status: ok ? 'delivered' : 'failed',
          nextAttemptAt: new Date(),
          countsAsTry: true,
          outcome: ok ? 'delivered' : 'rejected',
          detail: `ACK ${code ?? '(unreadable)'}`,
          durationMs: performance.now() - t0,
        });
      } catch (err) {
        const tries = row.tries + 1;
        const exhausted = tries >= this.cfg.retry.limit;
        report.failed++;
        report.lastError = errorText(err);
        report.results.push({
          ...base,
          status: exhausted ? 'failed' : 'pending',
          nextAttemptAt: new Date(Date.now() + backoffDelayMs(tries, this.cfg.retry)),
          countsAsTry: true,
          outcome: 'retryable',
          detail: `MLLP: ${errorText(err)}`,
          durationMs: performance.now() - t0,
        });
      }
    }
    return report;
  }
}
