import { z } from 'zod';
import { isoDateTime, pageQuerySchema } from './common';
import { transportSchema } from './devices';

/** What became of an inbound message. Every message is kept with one of these. */
export const inboundOutcomeSchema = z.enum(['accepted', 'duplicate', 'rejected', 'quarantined', 'reprocessed', 'discarded', 'conflicting']);
export type InboundOutcome = z.infer<typeof inboundOutcomeSchema>;

/** Continuity of a batch with the monitor's previous one. */
export const continuitySchema = z.enum(['first', 'contiguous', 'gap', 'overlap']);
export type Continuity = z.infer<typeof continuitySchema>;

export const inboundMessageSchema = z.object({
  id: z.string(),
  receivedAt: z.string(),
  transport: transportSchema,
  outcome: inboundOutcomeSchema,
  reason: z.string().nullable(),
  monitorIdentifier: z.string().nullable(),
  batchId: z.string().nullable(),
  sizeBytes: z.number().int(),
  continuity: continuitySchema.nullable(),
  /** Gap (positive) or overlap (negative) with the previous batch, ms. */
  continuityMs: z.number().nullable(),
  /** Who the edge authenticated (`api-key:<key id>`, `certificate:<SHA-256>`, `source:<address>`), null for a stranger. */
  sender: z.string().nullable().optional(),
  sourceAddress: z.string().nullable().optional(),
  /** From an unauthenticated or unknown sender: only metadata and a capped prefix are kept. */
  stranger: z.boolean().optional(),
});
export type InboundMessage = z.infer<typeof inboundMessageSchema>;

export const inboundMessageDetailSchema = inboundMessageSchema.extend({
  /** The message as received (UTF-8 text; HL7 segments separated by \r). */
  raw: z.string(),
  rawTruncated: z.boolean(),
  handledAt: z.string().nullable(),
  handledBy: z.string().nullable(),
});
export type InboundMessageDetail = z.infer<typeof inboundMessageDetailSchema>;

export const inboundQuerySchema = pageQuerySchema.extend({
  transport: transportSchema.optional(),
  outcome: inboundOutcomeSchema.optional(),
  monitor: z.string().max(64).optional(),
  from: isoDateTime.optional(),
  to: isoDateTime.optional(),
});
export type InboundQuery = z.infer<typeof inboundQuerySchema>;

export const discardInboundSchema = z.object({ reason: z.string().trim().min(1).max(500) });

export const reprocessResultSchema = z.object({
  message: inboundMessageSchema,
  /** The outcome of this attempt ('reprocessed', 'duplicate' or still 'quarantined'). */
  result: inboundOutcomeSchema,
  reason: z.string().nullable(),
});

/** Answer of POST /ingest/batches (202 new, 200 repeat). */
export const ingestReceiptSchema = z.object({
  inboundMessageId: z.string(),
  batchId: z.string(),
  outcome: z.enum(['accepted', 'duplicate']),
  continuity: continuitySchema.nullable(),
  continuityMs: z.number().nullable(),
  channels: z.array(z.object({ code: z.string(), role: z.string(), sampleRate: z.number(), samples: z.number().int() })),
});
export type IngestReceipt = z.infer<typeof ingestReceiptSchema>;

/**
 * Credentials the device edge accepts, registered on a monitor or on a profile (then valid for
 * each of its monitors): a client certificate's SHA-256 fingerprint (hex, colons optional) or
 * subject (RFC 4514 string or its CN) for MLLP over TLS; a source address or CIDR for plain MLLP.
 */
export const edgeCredentialScopeSchema = z.enum(['monitor', 'profile']);
export type EdgeCredentialScope = z.infer<typeof edgeCredentialScopeSchema>;
export const edgeCredentialKindSchema = z.enum(['certificate-fingerprint', 'certificate-subject', 'source']);
export type EdgeCredentialKind = z.infer<typeof edgeCredentialKindSchema>;

export const newEdgeCredentialSchema = z.object({
  kind: edgeCredentialKindSchema,
  value: z.string().trim().min(1).max(255),
  note: z.string().trim().max(255).optional(),
});
export type NewEdgeCredential = z.infer<typeof newEdgeCredentialSchema>;

export const edgeCredentialSchema = newEdgeCredentialSchema.extend({
  id: z.string(),
  scope: edgeCredentialScopeSchema,
  scopeId: z.string(),
  note: z.string().nullable(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
});
export type EdgeCredential = z.infer<typeof edgeCredentialSchema>;
