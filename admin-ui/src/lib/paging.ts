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

/**
 * Some list endpoints answer a plain array (no server paging yet). This pages, sorts and
 * searches such an answer in the browser so tables behave the same; a Page passes through.
 */
export function asPage<T>(data: T[] | Page<T>, query: { page?: number; pageSize?: number; sort?: string; order?: 'asc' | 'desc'; search?: string }): Page<T> {
  if (!Array.isArray(data)) return data;
  const page = query.page ?? 1;
  const pageSize = query.pageSize ?? 25;
  let rows = data;
  const needle = query.search?.trim().toLowerCase();
  if (needle) rows = rows.filter((r) => Object.values(r as object).some((v) => typeof v === 'string' && v.toLowerCase().includes(needle)));
  if (query.sort) {
    const key = query.sort as keyof T;
    const dir = query.order === 'asc' ? 1 : -1;
    rows = [...rows].sort((a, b) => {
      const x = a[key] as unknown;
      const y = b[key] as unknown;
      if (x === y) return 0;
      if (x === null || x === undefined) return 1;
      if (y === null || y === undefined) return -1;
      return (x < y ? -1 : 1) * dir;
    });
  }
  return { items: rows.slice((page - 1) * pageSize, page * pageSize), page, pageSize, total: rows.length };
}
