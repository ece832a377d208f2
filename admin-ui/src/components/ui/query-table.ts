import type { ListParams } from '@/lib/paging';

/** What a list screen's TanStack Query result looks like to the table (a page of items and the total). */
interface PagedQuery<T> {
  data?: { items: T[]; total: number };
  isPending: boolean;
  isFetching: boolean;
  error: unknown;
  refetch: () => unknown;
}

/**
 * The DataTable props every server-paged list screen wires the same way: rows, total and the
 * loading, refreshing and error states from the query; paging and sorting from the list state.
 */
export function queryTableProps<T>(query: PagedQuery<T>, list: { params: ListParams; setParams: (p: ListParams) => void }) {
  return {
    rows: query.data?.items,
    total: query.data?.total,
    loading: query.isPending,
    fetching: query.isFetching,
    error: query.error,
    onRetry: () => void query.refetch(),
    params: list.params,
    onParamsChange: list.setParams,
  };
}
