import { z } from 'zod';
import { isoDateTime, pageQuerySchema } from './common';
import { transportSchema } from './devices';

/** What became of an inbound message. Every message is kept with one of these. */
export const inboundOutcomeSchema = z.enum(['accepted', 'duplicate', 'rejected', 'quarantined', 'reprocessed', 'discarded']);
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
