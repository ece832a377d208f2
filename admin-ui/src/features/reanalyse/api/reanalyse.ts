import { useMutation, useQuery } from '@tanstack/react-query';
import type { AssessmentSummary, Bed, Page } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export interface ReanalysisRequest {
  monitorId?: string;
  from?: string;
  to?: string;
}
export interface ReanalysisAnswer {
  engineVersion: string;
  queued: number;
}

export function useReanalyse() {
  return useMutation({ mutationFn: (body: ReanalysisRequest) => api.post<ReanalysisAnswer>('/analysis/reanalyse', body) });
}

/** Assessments in the scope, every engine version, oldest window first; polled while the new ones arrive. */
export function useScopeAssessments(scope: Query | null, poll: boolean) {
  return useQuery({
    queryKey: ['reanalyse', 'scope', scope],
    enabled: scope !== null,
    queryFn: ({ signal }) => api.get<Page<AssessmentSummary>>('/assessments', { ...scope, sort: 'windowStart', order: 'asc', pageSize: 500 }, signal),
    refetchInterval: poll ? 3_000 : false,
  });
}

export function useAssessmentSummary(id: string | null) {
  return useQuery({
    queryKey: ['reanalyse', 'assessment', id],
    enabled: Boolean(id),
    queryFn: async ({ signal }) => (await api.get<{ assessment: AssessmentSummary }>(`/assessments/${encodeURIComponent(id!)}`, undefined, signal)).assessment,
  });
}

export function useBedList() {
  return useQuery({
    queryKey: ['reanalyse', 'beds'],
    queryFn: ({ signal }) => api.get<Page<Bed & { monitorId?: string | null }>>('/beds', { pageSize: 500, sort: 'name', order: 'asc' }, signal),
  });
}
