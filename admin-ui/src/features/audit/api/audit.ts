import { keepPreviousData, useQuery } from '@tanstack/react-query';
import type { AuditEntry, Page } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export const auditKeys = {
  all: ['audit'] as const,
  list: (q: Query) => ['audit', 'list', q] as const,
};

export function useAuditEntries(q: Query) {
  return useQuery({ queryKey: auditKeys.list(q), queryFn: ({ signal }) => api.get<Page<AuditEntry>>('/audit', q, signal), placeholderData: keepPreviousData });
}
