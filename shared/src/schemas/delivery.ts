import { z } from 'zod';
import { isoDateTime, pageQuerySchema } from './common';

/** Outbox row states (one name everywhere: DB column, API field, console label). */
export const deliveryStatusSchema = z.enum(['pending', 'waiting-context', 'delivered', 'failed', 'discarded', 'withheld']);
export type DeliveryStatus = z.infer<typeof deliveryStatusSchema>;

/** The indices, and the tidal volume challenge an assessment may carry (one more Observation). */
export const deliveredIndexSchema = z.enum(['ppv', 'spv', 'deltaPop', 'perfusionIndex', 'tidalVolumeChallenge']);

export const deliveryQuerySchema = pageQuerySchema.extend({
  status: deliveryStatusSchema.optional(),
  destination: z.string().max(64).optional(),
  assessment: z.string().max(36).optional(),
  index: deliveredIndexSchema.optional(),
  kind: z.enum(['create', 'amend']).optional(),
  from: isoDateTime.optional(),
  to: isoDateTime.optional(),
});
export type DeliveryQuery = z.infer<typeof deliveryQuerySchema>;

export const deliverySchema = z.object({
  id: z.string(),
  assessmentId: z.string(),
  destinationId: z.string(),
  index: deliveredIndexSchema,
  /** create = the Observation; amend = its entered-in-error amendment. */
  kind: z.enum(['create', 'amend']),
  status: deliveryStatusSchema,
  /** The Observation identifier value (idempotency key). */
  identifier: z.string(),
  serverId: z.string().nullable(),
  patientRef: z.string().nullable(),
  /** The patient's name and MRN as the EHR's Patient resource gave them when the context was resolved (null before). */
  patientName: z.string().nullable(),
  patientMrn: z.string().nullable(),
  tries: z.number().int(),
  attemptCount: z.number().int(),
  nextAttemptAt: isoDateTime,
  lastHttpStatus: z.number().int().nullable(),
  lastError: z.string().nullable(),
  discardReason: z.string().nullable(),
  createdAt: isoDateTime,
  updatedAt: isoDateTime,
  deliveredAt: isoDateTime.nullable(),
});
export type Delivery = z.infer<typeof deliverySchema>;

export const deliveryAttemptSchema = z.object({
  at: isoDateTime,
  durationMs: z.number().int(),
  httpStatus: z.number().int().nullable(),
  /** created | delivered | rejected | auth | retryable | waiting-context | withheld … */
  outcome: z.string(),
  detail: z.string().nullable(),
  /** The EHR's answer (an OperationOutcome for errors), as received. */
  response: z.unknown().nullable(),
  mode: z.enum(['single', 'bundle', 'mllp']),
});
export type DeliveryAttempt = z.infer<typeof deliveryAttemptSchema>;

export const deliveryDetailSchema = deliverySchema.extend({
  /** The FHIR resource (or HL7 message) as sent, null before the first send. */
  payload: z.unknown().nullable(),
  attempts: z.array(deliveryAttemptSchema),
});
export type DeliveryDetail = z.infer<typeof deliveryDetailSchema>;

export const deliveryIdsSchema = z.object({ ids: z.array(z.string().regex(/^\d+$/)).min(1).max(500) });
export type DeliveryIds = z.infer<typeof deliveryIdsSchema>;
export const discardDeliverySchema = z.object({ reason: z.string().trim().min(3).max(500) });
export type DiscardDelivery = z.infer<typeof discardDeliverySchema>;
export const deliveryActionResultSchema = z.object({ updated: z.array(z.string()), skipped: z.array(z.object({ id: z.string(), reason: z.string() })) });
export type DeliveryActionResult = z.infer<typeof deliveryActionResultSchema>;

/** Same states as the overview: misconfigured (401/403) > paused > circuit-open > down (failing) > up. */
export const destinationStateSchema = z.enum(['up', 'paused', 'circuit-open', 'down', 'misconfigured']);
export const destinationSchema = z.object({
  id: z.string(),
  name: z.string(),
  kind: z.enum(['fhir', 'hl7v2-mllp']),
  /** Summary for the console, computed as the overview does. */
  state: destinationStateSchema,
  paused: z.boolean(),
  pausedBy: z.string().nullable(),
  circuitState: z.enum(['closed', 'open', 'half-open']),
  consecutiveFailures: z.number().int(),
  downSince: isoDateTime.nullable(),
  lastSuccessAt: isoDateTime.nullable(),
  lastError: z.string().nullable(),
  configurationError: z.string().nullable(),
  queueDepth: z.number().int(),
  waitingContext: z.number().int(),
  failed: z.number().int(),
});
export type Destination = z.infer<typeof destinationSchema>;
