/**
 * Ebbgate adapter client (`@ebbgate/simulator/adapter`): what a real monitor adapter needs to get
 * batches to the gateway without losing any. See simulator/README.md.
 */
import { BatchSender, type BatchSenderOptions } from './batch-sender';
import { httpTransport, type HttpTransportOptions } from './http-transport';

export { BatchSender, type BatchSenderOptions, type SenderEvent, type SenderStats } from './batch-sender';
export { BatchSpool, DEFAULT_REJECTED_LIMITS, type RejectedLimits, type SpooledBatch } from './spool';
export { httpTransport, INGEST_PATH, type HttpTransportOptions } from './http-transport';
export { SampleBatcher, type BatcherChannel, type SampleBatcherOptions } from './sample-batcher';
export { DEFAULT_RETRY_POLICY, backoffDelay, nextDelay, parseRetryAfter, type RetryPolicy } from './retry-policy';
export type { BatchTransport, SendOutcome } from './transport';
export { buildOruR01, escapeHl7, hl7Time, OBX5_MAX_LENGTH, type OruMessageInput, type OruNumeric, type OruPatient, type OruWaveform } from './hl7/oru-message';
export { parseAck, ackReason, type Hl7Ack } from './hl7/ack';
export { frameMllp, MllpDeframer } from './hl7/mllp-frame';
export { MllpSender, MllpConnectionError, type MllpSenderOptions } from './hl7/mllp-sender';
export { mllpTransport, oruFromBatch, type MllpTransportOptions } from './hl7/mllp-transport';
export * as hl7Codes from './hl7/codes';

export interface IngestClientOptions extends Omit<BatchSenderOptions, 'transport'>, Omit<HttpTransportOptions, 'apiKey'> {
  /** API key per monitor identifier (a map or a lookup). */
  apiKeys: Record<string, string> | ((monitorId: string) => string | undefined);
}

/** The usual set-up: HTTP JSON ingest with a disk spool. */
export function createIngestClient(opts: IngestClientOptions): Promise<BatchSender> {
  const keys = opts.apiKeys;
  const apiKey = typeof keys === 'function' ? keys : (id: string) => keys[id];
  return BatchSender.open({
    ...opts,
    transport: httpTransport({ gatewayUrl: opts.gatewayUrl, apiKey, timeoutMs: opts.timeoutMs, maxSockets: opts.maxSockets }),
  });
}
