import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AssessmentSummary, Bed, Delivery, Monitor, Page } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';
import type { AnalysisResult, Waveform } from '@/lib/analysis';

export const assessmentKeys = {
  all: ['assessments'] as const,
  list: (q: Query) => ['assessments', 'list', q] as const,
  detail: (id: string) => ['assessments', 'detail', id] as const,
  beds: ['assessments', 'bed-options'] as const,
  monitor: (id: string) => ['assessments', 'monitor', id] as const,
};

/** One index's Observation as sent, and the outbox rows (shared Delivery) that carried it. */
export interface ObservationSent {
  index: string;
  resource: Record<string, unknown> | null;
  deliveries?: Delivery[];
}

export interface AssessmentDetail {
  assessment: AssessmentSummary & {
    enteredInErrorAt: string | null;
    enteredInErrorBy: string | null;
    enteredInErrorReason: string | null;
    result: AnalysisResult;
  };
  waveform: Waveform;
  observations: ObservationSent[];
}

export function useAssessments(q: Query) {
  return useQuery({
    queryKey: assessmentKeys.list(q),
    queryFn: ({ signal }) => api.get<Page<AssessmentSummary>>('/assessments', q, signal),
    placeholderData: keepPreviousData,
  });
}

export function useAssessment(id: string) {
  return useQuery({
    queryKey: assessmentKeys.detail(id),
    queryFn: ({ signal }) => api.get<AssessmentDetail>(`/assessments/${encodeURIComponent(id)}`, undefined, signal),
  });
}

export function useBedOptions() {
  return useQuery({
    queryKey: assessmentKeys.beds,
    queryFn: ({ signal }) => api.get<Page<Bed>>('/beds', { page: 1, pageSize: 500, sort: 'name', order: 'asc' }, signal),
    staleTime: 60_000,
  });
}

export function useMarkInError(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (reason: string) => api.post<unknown>(`/assessments/${encodeURIComponent(id)}/mark-in-error`, { reason }),
    onSuccess: () => qc.invalidateQueries({ queryKey: assessmentKeys.all }),
  });
}

/** The monitor behind an assessment, for showing its identifier instead of an internal id. */
export function useMonitorOf(id: string | undefined) {
  return useQuery({
    queryKey: assessmentKeys.monitor(id ?? ''),
    queryFn: ({ signal }) => api.get<Monitor>(`/monitors/${encodeURIComponent(id!)}`, undefined, signal),
    enabled: !!id,
    staleTime: 60_000,
  });
}
