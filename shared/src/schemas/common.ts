import { z } from 'zod';

/** Query parameters every list endpoint accepts (server-side paging and sorting). */
export const pageQuerySchema = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
  sort: z.string().max(64).optional(),
  order: z.enum(['asc', 'desc']).default('desc'),
});
export type PageQuery = z.infer<typeof pageQuerySchema>;

/** Envelope of every paginated list answer. */
export function pageOf<T extends z.ZodTypeAny>(item: T) {
  return z.object({
    items: z.array(item),
    page: z.number().int(),
    pageSize: z.number().int(),
    total: z.number().int(),
  });
}
export interface Page<T> {
  items: T[];
  page: number;
  pageSize: number;
  total: number;
}

/** RFC 9457 problem details, as every error answer of the gateway carries it. */
export const problemSchema = z.object({
  type: z.string(),
  title: z.string(),
  status: z.number().int(),
  detail: z.string().optional(),
  instance: z.string().optional(),
  /** One entry per bad field, for 400/422 answers. */
  errors: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
});
export type Problem = z.infer<typeof problemSchema>;

export const isoDateTime = z.iso.datetime({ offset: true });
export const idParam = z.object({ id: z.string().min(1).max(64) });
