import { Column, Entity, PrimaryColumn, PrimaryGeneratedColumn } from 'typeorm';

export type DestinationKind = 'fhir' | 'hl7v2-mllp';
export type CircuitState = 'closed' | 'open' | 'half-open';

/** A place results go: the EHR's FHIR API, optionally an HL7 v2 receiver. Rows come from config. */
@Entity('destination')
export class DestinationRow {
  @PrimaryColumn({ type: 'varchar', length: 64 }) id!: string;
  @Column({ type: 'varchar', length: 128 }) name!: string;
  @Column({ type: 'varchar', length: 16 }) kind!: DestinationKind;
  @Column({ type: 'boolean', default: false }) paused!: boolean;
  @Column({ name: 'paused_at', type: 'datetime', precision: 3, nullable: true }) pausedAt!: Date | null;
  @Column({ name: 'paused_by', type: 'varchar', length: 64, nullable: true }) pausedBy!: string | null;
  @Column({ name: 'circuit_state', type: 'varchar', length: 16, default: 'closed' }) circuitState!: CircuitState;
  @Column({ name: 'consecutive_failures', type: 'int', default: 0 }) consecutiveFailures!: number;
  @Column({ name: 'circuit_opened_at', type: 'datetime', precision: 3, nullable: true }) circuitOpenedAt!: Date | null;
  /** Start of the current run of failed attempts; null while the destination answers. */
  @Column({ name: 'down_since', type: 'datetime', precision: 3, nullable: true }) downSince!: Date | null;
  @Column({ name: 'last_success_at', type: 'datetime', precision: 3, nullable: true }) lastSuccessAt!: Date | null;
  @Column({ name: 'last_failure_at', type: 'datetime', precision: 3, nullable: true }) lastFailureAt!: Date | null;
  @Column({ name: 'last_error', type: 'text', nullable: true }) lastError!: string | null;
  /** Set on 401/403 (credentials or permissions wrong at the EHR); cleared by the next success. */
  @Column({ name: 'configuration_error', type: 'text', nullable: true }) configurationError!: string | null;
  @Column({ name: 'updated_at', type: 'datetime', precision: 3 }) updatedAt!: Date;
}

export type DeliveryStatus = 'pending' | 'waiting-context' | 'delivered' | 'failed' | 'discarded' | 'withheld';
export type DeliveryKind = 'create' | 'amend';

/** The outbox: one row per result (assessment × index) per destination, plus amendments. */
@Entity('delivery')
export class DeliveryRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'assessment_id', type: 'varchar', length: 36 }) assessmentId!: string;
  @Column({ name: 'destination_id', type: 'varchar', length: 64 }) destinationId!: string;
  /** ppv | spv | deltaPop | perfusionIndex. */
  @Column({ name: 'index_name', type: 'varchar', length: 32 }) indexName!: string;
  @Column({ type: 'varchar', length: 16 }) kind!: DeliveryKind;
  @Column({ type: 'varchar', length: 16 }) status!: DeliveryStatus;
  /** The Observation identifier value (system in config/codes.json): the idempotency key. */
  @Column({ type: 'varchar', length: 128 }) identifier!: string;
  /** What was (or will be) sent; built on first send, then kept so retries send the same. */
  @Column({ type: 'simple-json', nullable: true }) payload!: object | null;
  /** The EHR's id of the Observation once delivered. */
  @Column({ name: 'server_id', type: 'varchar', length: 64, nullable: true }) serverId!: string | null;
  @Column({ name: 'patient_ref', type: 'varchar', length: 128, nullable: true }) patientRef!: string | null;
  /** `Encounter/<id>` the result was filed under (with the patient, for reconciliation). */
  @Column({ name: 'encounter_ref', type: 'varchar', length: 128, nullable: true }) encounterRef!: string | null;
  /** Name and MRN from the EHR's Patient resource, fetched with the context (shown in the console). */
  @Column({ name: 'patient_name', type: 'varchar', length: 200, nullable: true }) patientName!: string | null;
  @Column({ name: 'patient_mrn', type: 'varchar', length: 64, nullable: true }) patientMrn!: string | null;
  /**
   * Fencing token: set by each claim, checked by every state change of the claim's holder, so a
   * worker whose lease ran out (and whose row another worker has claimed since) changes nothing.
   */
  @Column({ name: 'claim_id', type: 'varchar', length: 36, nullable: true }) claimId!: string | null;
  @Column({ name: 'claimed_at', type: 'datetime', precision: 3, nullable: true }) claimedAt!: Date | null;
  /** Attempts counted toward the retry limit (reset by a manual retry). */
  @Column({ type: 'int', default: 0 }) tries!: number;
  @Column({ name: 'attempt_count', type: 'int', default: 0 }) attemptCount!: number;
  /** When the row is next due; also the lease while a worker holds it. */
  @Column({ name: 'next_attempt_at', type: 'datetime', precision: 3 }) nextAttemptAt!: Date;
  @Column({ name: 'last_http_status', type: 'int', nullable: true }) lastHttpStatus!: number | null;
  @Column({ name: 'last_error', type: 'text', nullable: true }) lastError!: string | null;
  @Column({ name: 'discard_reason', type: 'text', nullable: true }) discardReason!: string | null;
  @Column({ name: 'discarded_by', type: 'varchar', length: 64, nullable: true }) discardedBy!: string | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'updated_at', type: 'datetime', precision: 3 }) updatedAt!: Date;
  @Column({ name: 'delivered_at', type: 'datetime', precision: 3, nullable: true }) deliveredAt!: Date | null;
}

/** Every attempt, with the EHR's answer (OperationOutcome or response bundle entry). */
@Entity('delivery_attempt')
export class DeliveryAttemptRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'delivery_id', type: 'bigint' }) deliveryId!: string;
  @Column({ type: 'datetime', precision: 3 }) at!: Date;
  @Column({ name: 'duration_ms', type: 'int' }) durationMs!: number;
  @Column({ name: 'http_status', type: 'int', nullable: true }) httpStatus!: number | null;
  /** delivered | rejected | auth | retryable | waiting-context */
  @Column({ type: 'varchar', length: 24 }) outcome!: string;
  @Column({ type: 'text', nullable: true }) detail!: string | null;
  @Column({ type: 'simple-json', nullable: true }) response!: object | null;
  /** single | bundle | mllp */
  @Column({ type: 'varchar', length: 16 }) mode!: string;
}

export type IncidentKind = 'down' | 'failures' | 'configuration' | 'amendment' | 'conflicting';

/** An alert incident: opened once, mailed once, cleared once. */
@Entity('alert_incident')
export class AlertIncidentRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'destination_id', type: 'varchar', length: 64 }) destinationId!: string;
  @Column({ type: 'varchar', length: 16 }) kind!: IncidentKind;
  /** `destination:kind` while open, null once cleared: the unique key allows one open incident. */
  @Column({ name: 'open_key', type: 'varchar', length: 96, nullable: true }) openKey!: string | null;
  @Column({ name: 'opened_at', type: 'datetime', precision: 3 }) openedAt!: Date;
  @Column({ name: 'cleared_at', type: 'datetime', precision: 3, nullable: true }) clearedAt!: Date | null;
  @Column({ type: 'text' }) detail!: string;
  @Column({ name: 'opened_mail_at', type: 'datetime', precision: 3, nullable: true }) openedMailAt!: Date | null;
  @Column({ name: 'cleared_mail_at', type: 'datetime', precision: 3, nullable: true }) clearedMailAt!: Date | null;
}

export type AlertMailEvent = 'opened' | 'cleared';
export type AlertMailStatus = 'pending' | 'sent';

/**
 * Alert mail as an outbox row: queued with the incident change, claimed (lease + fencing token),
 * sent, then marked. A process that dies after claiming leaves it due again: at-least-once, and
 * the stable Message-ID lets a mail client recognise a resend.
 */
@Entity('alert_mail')
export class AlertMailRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ name: 'incident_id', type: 'bigint' }) incidentId!: string;
  @Column({ type: 'varchar', length: 16 }) event!: AlertMailEvent;
  @Column({ name: 'message_id', type: 'varchar', length: 200 }) messageId!: string;
  @Column({ type: 'varchar', length: 16 }) status!: AlertMailStatus;
  @Column({ name: 'claim_id', type: 'varchar', length: 36, nullable: true }) claimId!: string | null;
  @Column({ name: 'claimed_until', type: 'datetime', precision: 3, nullable: true }) claimedUntil!: Date | null;
  @Column({ type: 'int', default: 0 }) tries!: number;
  @Column({ name: 'last_error', type: 'text', nullable: true }) lastError!: string | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'sent_at', type: 'datetime', precision: 3, nullable: true }) sentAt!: Date | null;
}
