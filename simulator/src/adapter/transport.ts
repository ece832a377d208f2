import type { IngestBatch } from '@ebbgate/shared';

/**
 * What one delivery attempt of a batch came to. `retry` is for trouble that passes (gateway
 * unreachable, overloaded, 5xx); `rejected` is a refusal that sending again will not change (bad
 * content, conflict, unknown monitor): the caller must look at it.
 */
export type SendOutcome =
  | { kind: 'accepted'; status: number; repeat: boolean; detail?: string }
  | { kind: 'retry'; reason: string; status?: number; retryAfterMs?: number }
  | { kind: 'rejected'; reason: string; status?: number; answer?: unknown };

/** One way of getting a batch to the gateway (HTTP JSON, HL7 over MLLP …). */
export interface BatchTransport {
  readonly name: string;
  send(batch: IngestBatch): Promise<SendOutcome>;
  close?(): Promise<void>;
}
