import type { FieldError } from '../http/problem';

/**
 * Why an inbound message was not stored as waveform data, independent of the transport:
 * HTTP turns it into problem details, MLLP into an AE/AR (CE/CR) acknowledgement with ERR.
 * `invalid` and `unmapped` messages are quarantined (they can be reprocessed); the rest rejected.
 */
export type RefusalKind = 'invalid' | 'unmapped' | 'conflict' | 'too-large' | 'backlog';

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

  get quarantines(): boolean {
    return this.kind === 'invalid' || this.kind === 'unmapped';
  }

  /** One line for the inbound message's `reason` column: the summary and each field. */
  describe(): string {
    const fields = this.errors.map((e) => `${e.path}: ${e.message}`).join('; ');
    return fields ? `${this.reason} (${fields})` : this.reason;
  }
}
