import type { Page } from '@ebbgate/shared';

export type { Page };

/** The list state every server-paginated table shares; kept in the URL-independent table state. */
export interface ListParams {
  page: number;
  pageSize: number;
  sort?: string;
  order: 'asc' | 'desc';
}

export const DEFAULT_LIST: ListParams = { page: 1, pageSize: 25, order: 'desc' };

export type Filters = Record<string, string | undefined>;

/** Drops empty filter values so they are neither sent nor part of the query key. */
export function cleanFilters(filters: Filters): Filters {
  const out: Filters = {};
  for (const [k, v] of Object.entries(filters)) if (v !== undefined && v !== '') out[k] = v;
  return out;
}
