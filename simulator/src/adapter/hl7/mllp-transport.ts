import { decodeSamples, type ChannelRole, type IngestBatch, type IngestChannel } from '@ebbgate/shared';
import { SYNTHETIC_CHANNEL_CODES } from '@ebbgate/shared/synthetic';
import type { BatchTransport, SendOutcome } from '../transport';
import { ackReason } from './ack';
import { NUMERIC_CODES, UNIT_CODES, UNIT_FOR_ROLE, WAVEFORM_CODES } from './codes';
import { MllpConnectionError, MllpSender, type MllpSenderOptions } from './mllp-sender';
import { buildOruR01, type OruMessageInput, type OruNumeric, type OruPatient } from './oru-message';

export interface MllpTransportOptions extends MllpSenderOptions {
  ackMode?: 'original' | 'enhanced';
  /** Role of a channel code when the batch does not say (default: the synthetic/MDC codes). */
  roleOf?: (code: string) => ChannelRole | undefined;
  /** Numerics to add to each message (HR, SpO2 …) beside those taken from the batch context. */
  numerics?: (batch: IngestBatch) => OruNumeric[];
  patient?: (monitorId: string) => OruPatient | undefined;
  location?: (monitorId: string) => OruMessageInput['location'];
  /** Channels whose role is unknown are sent with this code system (default local `99EBB`). */
  unknownCodeSystem?: string;
  /**
   * Parallel MLLP connections (default 1). A monitor always uses the same one, so its messages
   * stay in order; more connections let many monitors send at once, as real monitors do.
   */
  connections?: number;
}

/** Stable small hash (FNV-1a) of a monitor id, to pin it to one connection. */
function pin(id: string, n: number): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < id.length; i++) h = Math.imul(h ^ id.charCodeAt(i), 0x01000193);
  return (h >>> 0) % n;
}

const KNOWN_CODES = new Map<string, ChannelRole>(
  (Object.keys(SYNTHETIC_CHANNEL_CODES) as ChannelRole[]).flatMap((role) => [
    [SYNTHETIC_CHANNEL_CODES[role], role],
    [WAVEFORM_CODES[role].code, role],
  ]),
);

/** Turns an ingest batch into the ORU^R01 message the same monitor would send over MLLP. */
export function oruFromBatch(batch: IngestBatch, opts: Omit<MllpTransportOptions, 'host' | 'port'> = {}): OruMessageInput {
  const roleOf = (c: IngestChannel) => c.role ?? opts.roleOf?.(c.code) ?? KNOWN_CODES.get(c.code);
  const ctx = batch.context ?? {};
  const numerics: OruNumeric[] = [...(opts.numerics?.(batch) ?? [])];
  if (ctx.setRespiratoryRate !== undefined)
    numerics.push({ code: NUMERIC_CODES.setRespiratoryRate, value: ctx.setRespiratoryRate, unit: UNIT_CODES.breathsPerMin });
  if (ctx.tidalVolumeMl !== undefined) numerics.push({ code: NUMERIC_CODES.tidalVolume, value: ctx.tidalVolumeMl, unit: UNIT_CODES.mL });
  if (ctx.patientHeightCm !== undefined) numerics.push({ code: NUMERIC_CODES.patientHeight, value: ctx.patientHeightCm, unit: UNIT_CODES.cm });
  if (ctx.vasopressorRunning !== undefined)
    numerics.push({ code: NUMERIC_CODES.vasopressor, value: ctx.vasopressorRunning ? 1 : 0, unit: UNIT_CODES.dimensionless });
  const patient = opts.patient?.(batch.monitorId) ?? (ctx.patientSex ? { mrn: '', sex: ctx.patientSex } : undefined);
  return {
    controlId: batch.batchId,
    equipmentId: batch.monitorId,
    startTime: new Date(batch.startTime),
    ackMode: opts.ackMode,
    patient,
    location: opts.location?.(batch.monitorId),
    waveforms: batch.channels.map((c) => {
      const role = roleOf(c);
      const code = role ? WAVEFORM_CODES[role] : { code: c.code, text: c.code, system: opts.unknownCodeSystem ?? '99EBB' };
      const unit = role ? UNIT_FOR_ROLE[role] : { code: c.unit ?? '', text: c.unit ?? '', system: 'UCUM' };
      return { code, unit, sampleRate: c.sampleRate, samples: decodeSamples(c.samples) };
    }),
    numerics,
  };
}

/**
 * The same durable sender over HL7 v2/MLLP: AA/CA = accepted; AE/CE (and AR/CR) = refused with
 * the ERR reason; AR/CR with ERR-3 207 (application internal error: the receiver's storage is
 * away, its backlog full), a NAK with an empty MSA-2 and lost connections are retried, since the
 * receiver's own trouble passes: such batches stay in the spool, only refusals of the content
 * itself go to `rejected/`.
 */
export function mllpTransport(opts: MllpTransportOptions): BatchTransport {
  const senders = Array.from({ length: Math.max(1, opts.connections ?? 1) }, () => new MllpSender(opts));
  return {
    name: 'mllp',
    async send(batch: IngestBatch): Promise<SendOutcome> {
      let message: string;
      try {
        message = buildOruR01(oruFromBatch(batch, opts));
      } catch (err) {
        return { kind: 'rejected', reason: `cannot build ORU^R01: ${(err as Error).message}` };
      }
      try {
        const ack = await senders[pin(batch.monitorId, senders.length)].send(message, batch.batchId);
        if (ack.accepted) return { kind: 'accepted', status: 0, repeat: false, detail: ack.code };
        // A negative answer that does not echo our control id (MSA-2) is no verdict on this message.
        if (!ack.controlId) return { kind: 'retry', reason: `${ackReason(ack)} (MSA-2 empty: not an answer to ${batch.batchId})` };
        const internal = (ack.code === 'AR' || ack.code === 'CR') && ack.errors.some((e) => e.code === '207');
        if (internal) return { kind: 'retry', reason: ackReason(ack) };
        return { kind: 'rejected', reason: ackReason(ack), answer: ack.raw };
      } catch (err) {
        if (err instanceof MllpConnectionError) return { kind: 'retry', reason: err.message };
        throw err;
      }
    },
    close: async () => {
      await Promise.all(senders.map((s) => s.close()));
    },
  };
}
