import { badRequest } from './problem';

/**
 * The SQL column for a list's `sort` query key: the default when none is given, 400 problem
 * details for a key the list does not offer. Own keys only, so `constructor` or `__proto__`
 * never resolve to something inherited from Object.prototype (that used to reach the ORM as a
 * function and answer 500).
 */
export function sortColumn(columns: Readonly<Record<string, string>>, key: string | undefined, fallback: string): string {
  if (key === undefined || key === '') return fallback;
  if (!Object.hasOwn(columns, key)) {
    const offered = Object.keys(columns).join(', ');
    throw badRequest(`Unknown sort key "${key.slice(0, 64)}"; this list sorts by ${offered}.`, [{ path: 'query.sort', message: `one of ${offered}` }]);
  }
  return columns[key]!;
}
