import { keepPreviousData, useQuery } from '@tanstack/react-query';
import type { BedDataState, BedTrend, Board } from '@ebbgate/shared';
import { api, buildUrl } from '@/lib/api-client';
import type { TidalVolumeChallengeResult } from '@/lib/analysis';

export interface BoardFilters {
  unit?: string;
  state?: BedDataState;
  q?: string;
  page: number;
  pageSize: number;
}

export const boardKeys = {
  all: ['board'] as const,
  list: (f: BoardFilters) => ['board', 'list', f] as const,
  trend: (bedId: string, hours: number) => ['board', 'trend', bedId, hours] as const,
};

/** The board polls: one call answers for every bed on the page, so a short interval is cheap. */
export const BOARD_POLL_MS = 10_000;

export function useBoard(f: BoardFilters) {
  return useQuery({
    queryKey: boardKeys.list(f),
    queryFn: ({ signal }) => api.get<Board>('/board', { unit: f.unit, state: f.state, q: f.q, page: f.page, pageSize: f.pageSize }, signal),
    refetchInterval: BOARD_POLL_MS,
    placeholderData: keepPreviousData,
  });
}

export function useBedTrend(bedId: string, hours: number) {
  return useQuery({
    queryKey: boardKeys.trend(bedId, hours),
    queryFn: ({ signal }) => api.get<BedTrend>(`/board/beds/${encodeURIComponent(bedId)}/trend`, { hours }, signal),
    refetchInterval: 30_000,
    placeholderData: keepPreviousData,
  });
}

export function trendCsvUrl(bedId: string, hours: number): string {
  return buildUrl(`/board/beds/${encodeURIComponent(bedId)}/trend.csv`, { hours });
}

/** The engine's challenge result of one assessment (for the challenge panel on the trend). */
export function useChallengeOf(assessmentId: string | null) {
  return useQuery({
    queryKey: ['assessments', assessmentId, 'challenge'],
    enabled: Boolean(assessmentId),
    queryFn: async ({ signal }) => {
      const d = await api.get<{
        assessment: { tidalVolumeChallenge?: TidalVolumeChallengeResult | null; result: { tidalVolumeChallenge?: TidalVolumeChallengeResult | null } };
      }>(`/assessments/${encodeURIComponent(assessmentId!)}`, undefined, signal);
      return d.assessment.tidalVolumeChallenge ?? d.assessment.result.tidalVolumeChallenge ?? null;
    },
  });
}
