import { useMutation, useQuery } from '@tanstack/react-query';
import type { Page } from '@ebbgate/shared';
import { api } from '@/lib/api-client';
import type { PreviewResult } from '@/lib/analysis';

export const testBenchKeys = {
  profileOptions: ['test-bench', 'profile-options'] as const,
};

export interface ProfileOption {
  id: string;
  name: string;
  manufacturer: string;
  model: string;
}

export function useProfileOptions() {
  return useQuery({
    queryKey: testBenchKeys.profileOptions,
    queryFn: ({ signal }) => api.get<Page<ProfileOption>>('/profiles', { page: 1, pageSize: 500, sort: 'name', order: 'asc' }, signal),
  });
}

/** POST /analysis/preview: runs the engine on an uploaded capture without storing anything. */
export function usePreview() {
  return useMutation({
    mutationFn: ({ file, profileId }: { file: File; profileId?: string }) => {
      const form = new FormData();
      form.set('file', file, file.name);
      if (profileId) form.set('profileId', profileId);
      return api.upload<PreviewResult>('/analysis/preview', form);
    },
  });
}
