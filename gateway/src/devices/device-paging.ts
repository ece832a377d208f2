import type { SelectQueryBuilder, ObjectLiteral } from 'typeorm';
import type { PageQuery } from '@ebbgate/shared';

/**
 * Orders and pages a device list. `columns` maps each whitelisted API sort field to its SQL column;
 * the schema already refused any other field. Without a sort the list keeps its natural order
 * (`natural`, ascending). `tieBreak` is a unique column, so pages stay stable when values repeat.
 */
export function orderAndPage<T extends ObjectLiteral>(
  qb: SelectQueryBuilder<T>,
  q: PageQuery,
  columns: Record<string, string>,
  natural: string[],
  tieBreak: string,
): SelectQueryBuilder<T> {
  const sorted = q.sort ? columns[q.sort] : undefined;
  const dir = sorted && q.order === 'desc' ? 'DESC' : 'ASC';
  const order = sorted ? [sorted] : natural;
  order.forEach((c, i) => (i === 0 ? qb.orderBy(c, dir) : qb.addOrderBy(c, dir)));
  if (!order.includes(tieBreak)) qb.addOrderBy(tieBreak, dir);
  return qb.skip((q.page - 1) * q.pageSize).take(q.pageSize);
}

/** `LIKE` pattern for a free-text search, with the wildcards in the user's text taken literally. */
export function likePattern(search: string): string {
  return `%${search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}
