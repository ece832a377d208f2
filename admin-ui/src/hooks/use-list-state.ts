import { useCallback, useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import { DEFAULT_LIST, cleanFilters, type Filters, type ListParams } from '@/lib/paging';

const PAGING_KEYS = new Set(['page', 'pageSize', 'sort', 'order']);

/**
 * Paging, sorting and filters of one table; changing a filter goes back to page 1. Filters in the
 * address (`/assessments?verdict=valid`, as the overview links) replace the defaults on arrival.
 */
export function useListState(initial: Partial<ListParams> = {}, initialFilters: Filters = {}) {
  const [search] = useSearchParams();
  const [params, setParams] = useState<ListParams>({ ...DEFAULT_LIST, ...initial });
  const [filters, setFiltersRaw] = useState<Filters>(() => {
    const fromUrl = Object.fromEntries([...search.entries()].filter(([k]) => !PAGING_KEYS.has(k)));
    return cleanFilters(Object.keys(fromUrl).length > 0 ? fromUrl : initialFilters);
  });
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
