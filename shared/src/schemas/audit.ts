import { z } from 'zod';
import { pageQuerySchema } from './common';

export const actorTypeSchema = z.enum(['user', 'device', 'system']);

export const auditEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  actorType: actorTypeSchema,
  actorId: z.string().nullable(),
  actorName: z.string().nullable(),
  /** Dotted verb, e.g. `user.create`, `device-key.revoke`, `assessment.mark-in-error`. */
  action: z.string(),
  entityType: z.string(),
  entityId: z.string().nullable(),
  before: z.unknown().nullable(),
  after: z.unknown().nullable(),
  requestId: z.string().nullable(),
});
export type AuditEntry = z.infer<typeof auditEntrySchema>;

export const auditQuerySchema = pageQuerySchema.extend({
  actor: z.string().max(64).optional(),
  action: z.string().max(64).optional(),
  entityType: z.string().max(64).optional(),
  entityId: z.string().max(64).optional(),
  from: z.iso.datetime({ offset: true }).optional(),
  to: z.iso.datetime({ offset: true }).optional(),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;
