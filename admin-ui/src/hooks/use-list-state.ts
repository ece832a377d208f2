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
  const fromAddress = () => {
    const fromUrl = Object.fromEntries([...search.entries()].filter(([k]) => !PAGING_KEYS.has(k)));
    return cleanFilters(Object.keys(fromUrl).length > 0 ? fromUrl : initialFilters);
  };
  const [filters, setFiltersRaw] = useState<Filters>(fromAddress);
  // Following a link to the same screen with other filters (e.g. from a toast or a detail) applies
  // them: adjusted while rendering, React's pattern for state that follows a changed input.
  const address = search.toString();
  const [seen, setSeen] = useState(address);
  if (seen !== address) {
    setSeen(address);
    setFiltersRaw(fromAddress());
    setParams((p) => ({ ...p, page: 1 }));
  }
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
