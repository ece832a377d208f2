import { z } from 'zod';
import { pageQuerySchema } from './common';
import { channelRoleSchema, checklistContextSchema, plethScalingSchema, probeSiteSchema } from './ingest';

export const transportSchema = z.enum(['http', 'mllp']);
export type Transport = z.infer<typeof transportSchema>;

/** One channel of a monitor model: inbound code → role, unit, scaling (physical = gain × raw + offset), rate. */
export const profileChannelSchema = z.object({
  /** IEEE 11073 MDC code (`150036` or `MDC_PRESS_BLD_ART_ABP`) or the adapter's own label. */
  code: z.string().trim().min(1).max(64),
  label: z.string().max(128).optional(),
  role: channelRoleSchema,
  /** Physical unit after scaling, e.g. `mmHg`, `cmH2O`, `1` for pleth. */
  unit: z.string().min(1).max(32),
  gain: z
    .number()
    .finite()
    .refine((g) => g !== 0, 'gain must not be 0')
    .default(1),
  offset: z.number().finite().default(0),
  /** Samples per second the monitor sends for this channel. */
  sampleRate: z.number().positive().max(2000),
  /** What the monitor itself does to the signal before sending it (free text), if declared. */
  builtInFiltering: z.string().max(200).optional(),
});
export type ProfileChannelInput = z.input<typeof profileChannelSchema>;
export type ProfileChannel = z.infer<typeof profileChannelSchema>;

const channelsSchema = z
  .array(profileChannelSchema)
  .min(1)
  .max(16)
  .refine((chs) => new Set(chs.map((c) => c.code.toUpperCase())).size === chs.length, 'each channel code may appear once');

export const monitorProfileInputSchema = z.object({
  name: z.string().trim().min(1).max(128),
  manufacturer: z.string().trim().min(1).max(128),
  model: z.string().trim().min(1).max(128),
  transports: z.array(transportSchema).min(1).max(2),
  channels: channelsSchema,
  defaultProbeSite: probeSiteSchema.nullable().optional(),
  plethScaling: plethScalingSchema.default('raw'),
  notes: z.string().max(2000).nullable().optional(),
});
export type MonitorProfileInput = z.input<typeof monitorProfileInputSchema>;

export const monitorProfileSchema = monitorProfileInputSchema.extend({
  id: z.string(),
  defaultProbeSite: probeSiteSchema.nullable(),
  notes: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type MonitorProfile = z.infer<typeof monitorProfileSchema>;

/** EUI-64 as 16 hex digits (the IHE PCD-01 preferred form) or a serial number. */
export const monitorIdentifierSchema = z
  .string()
  .trim()
  .min(1)
  .max(64)
  .regex(/^[A-Za-z0-9._:-]+$/, 'letters, digits and . _ : - only (an EUI-64 such as 0223456789ABCDEF, or a serial number)');

export const createMonitorSchema = z.object({
  identifier: monitorIdentifierSchema,
  profileId: z.string().max(36).nullable().optional(),
  bedId: z.string().max(36).nullable().optional(),
  enabled: z.boolean().default(true),
});
export type CreateMonitor = z.input<typeof createMonitorSchema>;

export const updateMonitorSchema = z
  .object({
    identifier: monitorIdentifierSchema,
    profileId: z.string().max(36).nullable(),
    bedId: z.string().max(36).nullable(),
    enabled: z.boolean(),
  })
  .partial()
  .refine((v) => Object.keys(v).length > 0, 'change at least one field');
export type UpdateMonitor = z.infer<typeof updateMonitorSchema>;

export const monitorSchema = z.object({
  id: z.string(),
  identifier: z.string(),
  profileId: z.string().nullable(),
  bedId: z.string().nullable(),
  enabled: z.boolean(),
  lastSeenAt: z.string().nullable(),
  /** Samples per second over the last batch, all channels together. */
  dataRate: z.number().nullable(),
  hasApiKey: z.boolean(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Monitor = z.infer<typeof monitorSchema>;

/** `true` / `false` in a query string; anything else is a 400 rather than a silent guess. */
const queryFlag = z.enum(['true', 'false']).transform((v) => v === 'true');
const searchText = z.string().trim().max(64).optional();

/** Columns a profile list may be sorted on (anything else is refused, so no raw column reaches SQL). */
export const profileSortFields = ['name', 'manufacturer', 'model', 'createdAt', 'updatedAt'] as const;
export const profileQuerySchema = pageQuerySchema.extend({
  sort: z.enum(profileSortFields).optional(),
  /** Part of the name, manufacturer or model. */
  search: searchText,
});
export type ProfileQuery = z.infer<typeof profileQuerySchema>;

export const monitorSortFields = ['identifier', 'enabled', 'lastSeenAt', 'dataRate', 'createdAt', 'updatedAt'] as const;
export const monitorQuerySchema = pageQuerySchema.extend({
  sort: z.enum(monitorSortFields).optional(),
  profileId: z.string().max(36).optional(),
  bedId: z.string().max(36).optional(),
  enabled: queryFlag.optional(),
  /** Part of the identifier. */
  search: searchText,
});
export type MonitorQuery = z.infer<typeof monitorQuerySchema>;

export const apiKeyIssuedSchema = z.object({ apiKey: z.string(), keyId: z.string(), createdAt: z.string() });
export type ApiKeyIssued = z.infer<typeof apiKeyIssuedSchema>;

export const bedInputSchema = z.object({
  name: z.string().trim().min(1).max(64),
  unit: z.string().trim().min(1).max(64),
  /** The EHR Location identifier. */
  locationIdentifier: z.string().trim().min(1).max(128),
  /**
   * Checklist items for the patient in this bed (open chest, raised intra-abdominal pressure, …),
   * set by a person and audited; every analysis of the bed's monitor takes them as context.
   */
  checklist: checklistContextSchema.strict().nullable().optional(),
});
export type BedInput = z.infer<typeof bedInputSchema>;
export const updateBedSchema = bedInputSchema.partial().refine((v) => Object.keys(v).length > 0, 'change at least one field');

export const bedSchema = bedInputSchema.extend({
  id: z.string(),
  /** The monitor currently assigned to the bed, if any. */
  monitorId: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Bed = z.infer<typeof bedSchema>;

export const bedSortFields = ['name', 'unit', 'locationIdentifier', 'createdAt', 'updatedAt'] as const;
export const bedQuerySchema = pageQuerySchema.extend({
  sort: z.enum(bedSortFields).optional(),
  unit: z.string().max(64).optional(),
  /** Part of the bed name, its unit or its EHR Location identifier. */
  search: searchText,
});
export type BedQuery = z.infer<typeof bedQuerySchema>;
