import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  ApiKeyIssued,
  Bed,
  BedInput,
  CreateMonitor,
  Monitor,
  MonitorProfile,
  MonitorProfileInput,
  Page,
  UpdateMonitor,
  LatestFlushTest,
} from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export const profileKeys = {
  all: ['profiles'] as const,
  list: (q: Query) => ['profiles', 'list', q] as const,
  detail: (id: string) => ['profiles', 'detail', id] as const,
};
export const monitorKeys = {
  all: ['monitors'] as const,
  list: (q: Query) => ['monitors', 'list', q] as const,
};
export const bedKeys = {
  all: ['beds'] as const,
  list: (q: Query) => ['beds', 'list', q] as const,
};

const enc = encodeURIComponent;
/** Option lists for selects: one page of the largest size the API allows (500), sorted by name. */
const OPTIONS: Query = { page: 1, pageSize: 500, order: 'asc' };

export function useProfiles(q: Query) {
  return useQuery({
    queryKey: profileKeys.list(q),
    queryFn: ({ signal }) => api.get<Page<MonitorProfile>>('/profiles', q, signal),
    placeholderData: keepPreviousData,
  });
}
export const useProfileOptions = () => useProfiles({ ...OPTIONS, sort: 'name' });
export function useProfile(id: string | undefined) {
  return useQuery({
    queryKey: profileKeys.detail(id ?? ''),
    queryFn: ({ signal }) => api.get<MonitorProfile>(`/profiles/${enc(id!)}`, undefined, signal),
    enabled: !!id,
  });
}
export function useSaveProfile(id: string | undefined) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: MonitorProfileInput) => (id ? api.put<MonitorProfile>(`/profiles/${enc(id)}`, body) : api.post<MonitorProfile>('/profiles', body)),
    onSuccess: () => qc.invalidateQueries({ queryKey: profileKeys.all }),
  });
}
export function useDeleteProfile() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api.delete<void>(`/profiles/${enc(id)}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: profileKeys.all }),
  });
}

export function useMonitors(q: Query) {
  return useQuery({
    queryKey: monitorKeys.list(q),
    queryFn: ({ signal }) => api.get<Page<Monitor>>('/monitors', q, signal),
    placeholderData: keepPreviousData,
  });
}
export const useMonitorOptions = () => useMonitors({ ...OPTIONS, sort: 'identifier' });
export function useCreateMonitor() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateMonitor) => api.post<Monitor>('/monitors', body),
    onSuccess: () => {
      qc.invalidateQueries({ queryKey: monitorKeys.all });
      qc.invalidateQueries({ queryKey: bedKeys.all });
    },
  });
}
export function useUpdateMonitor() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id: string; body: UpdateMonitor }) => api.patch<Monitor>(`/monitors/${enc(id)}`, body),
    onSuccess: () => {
      qc.invalidateQueries({ queryKey: monitorKeys.all });
      qc.invalidateQueries({ queryKey: bedKeys.all });
    },
  });
}
export function useDeleteMonitor() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api.delete<void>(`/monitors/${enc(id)}`),
    onSuccess: () => {
      qc.invalidateQueries({ queryKey: monitorKeys.all });
      qc.invalidateQueries({ queryKey: bedKeys.all });
    },
  });
}
export function useIssueApiKey() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api.post<ApiKeyIssued>(`/monitors/${enc(id)}/api-key`),
    onSuccess: () => qc.invalidateQueries({ queryKey: monitorKeys.all }),
  });
}
export function useRevokeApiKey() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api.delete<void>(`/monitors/${enc(id)}/api-key`),
    onSuccess: () => qc.invalidateQueries({ queryKey: monitorKeys.all }),
  });
}

export function useBeds(q: Query) {
  return useQuery({ queryKey: bedKeys.list(q), queryFn: ({ signal }) => api.get<Page<Bed>>('/beds', q, signal), placeholderData: keepPreviousData });
}
export const useBedOptions = () => useBeds({ ...OPTIONS, sort: 'name' });
export function useSaveBed() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id?: string; body: BedInput }) => (id ? api.patch<Bed>(`/beds/${enc(id)}`, body) : api.post<Bed>('/beds', body)),
    onSuccess: () => qc.invalidateQueries({ queryKey: bedKeys.all }),
  });
}
export function useDeleteBed() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (id: string) => api.delete<void>(`/beds/${enc(id)}`), onSuccess: () => qc.invalidateQueries({ queryKey: bedKeys.all }) });
}

/** The latest flush test measured on a monitor's arterial line (GET /board/monitors/:id/flush-test). */
export function useLatestFlushTest(monitorId: string) {
  return useQuery({
    queryKey: ['monitors', monitorId, 'flush-test'],
    queryFn: ({ signal }) => api.get<LatestFlushTest>(`/board/monitors/${encodeURIComponent(monitorId)}/flush-test`, undefined, signal),
  });
}
