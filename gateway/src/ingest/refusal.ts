import type { FieldError } from '../http/problem';

/**
 * Why an inbound message was not stored as waveform data, independent of the transport:
 * HTTP turns it into problem details, MLLP into an AE/AR (CE/CR) acknowledgement with ERR.
 * `invalid` and `unmapped` messages are quarantined (they can be reprocessed); the rest rejected.
 * `backlog` and `unavailable` are the gateway's own passing trouble, not a fault of the message:
 * the sender keeps the message and sends it again (HTTP 429/503 with Retry-After, MLLP AR/CR
 * with ERR-3 207). `unauthorized`: the sender's credential does not speak for that monitor.
 * `conflicting`: a second stream for a monitor overlapping data already stored from another sender.
 */
export type RefusalKind = 'invalid' | 'unmapped' | 'conflict' | 'too-large' | 'backlog' | 'unavailable' | 'unauthorized' | 'conflicting';

export class IngestRefusal extends Error {
  override name = 'IngestRefusal';
  constructor(
    readonly kind: RefusalKind,
    readonly reason: string,
    readonly errors: FieldError[] = [],
    /** HL7 table 0357 error code for ERR-3 when the message came over MLLP. */
    readonly hl7Code?: number,
  ) {
    super(reason);
  }

  /** Passing trouble on the gateway's side: the sender should keep the message and resend. */
  get transient(): boolean {
    return this.kind === 'backlog' || this.kind === 'unavailable';
  }

  get quarantines(): boolean {
    return this.kind === 'invalid' || this.kind === 'unmapped';
  }

  /** One line for the inbound message's `reason` column: the summary and each field. */
  describe(): string {
    const fields = this.errors.map((e) => `${e.path}: ${e.message}`).join('; ');
    return fields ? `${this.reason} (${fields})` : this.reason;
  }
}
