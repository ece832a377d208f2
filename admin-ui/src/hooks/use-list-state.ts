import { useCallback, useState } from 'react';
import { DEFAULT_LIST, cleanFilters, type Filters, type ListParams } from '@/lib/paging';

/** Paging, sorting and filters of one table; changing a filter goes back to page 1. */
export function useListState(initial: Partial<ListParams> = {}, initialFilters: Filters = {}) {
  const [params, setParams] = useState<ListParams>({ ...DEFAULT_LIST, ...initial });
  const [filters, setFiltersRaw] = useState<Filters>(initialFilters);
  const setFilter = useCallback((key: string, value: string | undefined) => {
    setFiltersRaw((f) => cleanFilters({ ...f, [key]: value }));
    setParams((p) => ({ ...p, page: 1 }));
  }, []);
  const clearFilters = useCallback(() => {
    setFiltersRaw({});
    setParams((p) => ({ ...p, page: 1 }));
  }, []);
  return { params, setParams, filters, setFilter, clearFilters, query: { ...params, ...cleanFilters(filters) } };
}
