import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { SiteSettings } from '@ebbgate/shared';
import { api } from '@/lib/api-client';

export const settingsKeys = { all: ['settings'] as const };

export function useSiteSettings() {
  return useQuery({ queryKey: settingsKeys.all, queryFn: ({ signal }) => api.get<SiteSettings>('/settings', undefined, signal) });
}

export function useSaveSiteSettings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SiteSettings) => api.put<SiteSettings>('/settings', body),
    onSuccess: (saved) => qc.setQueryData(settingsKeys.all, saved),
  });
}
