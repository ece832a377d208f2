import { keepPreviousData, useQuery, useQueryClient } from '@tanstack/react-query';
import type { InboundMessage, InboundMessageDetail, Page } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export const inboundKeys = {
  all: ['inbound'] as const,
  list: (q: Query) => ['inbound', 'list', q] as const,
  detail: (id: string) => ['inbound', 'detail', id] as const,
};

const enc = encodeURIComponent;

export function useInboundMessages(q: Query) {
  return useQuery({
    queryKey: inboundKeys.list(q),
    queryFn: ({ signal }) => api.get<Page<InboundMessage>>('/inbound-messages', q, signal),
    placeholderData: keepPreviousData,
  });
}
export function useInboundMessage(id: string | null) {
  return useQuery({
    queryKey: inboundKeys.detail(id ?? ''),
    queryFn: ({ signal }) => api.get<InboundMessageDetail>(`/inbound-messages/${enc(id!)}`, undefined, signal),
    enabled: !!id,
  });
}
export const reprocessInbound = (id: string) => api.post<unknown>(`/inbound-messages/${enc(id)}/reprocess`);
export const discardInbound = (id: string, reason: string) => api.post<unknown>(`/inbound-messages/${enc(id)}/discard`, { reason });

export function useInvalidateInbound() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: inboundKeys.all });
}
