import { useQuery } from '@tanstack/react-query';
import type { Overview } from '@ebbgate/shared';
import { api } from '@/lib/api-client';

export const overviewKeys = { all: ['overview'] as const };

export function useOverview() {
  return useQuery({ queryKey: overviewKeys.all, queryFn: ({ signal }) => api.get<Overview>('/overview', undefined, signal), refetchInterval: 15_000 });
}
