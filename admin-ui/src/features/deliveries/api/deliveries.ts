import { keepPreviousData, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Delivery, DeliveryActionResult, DeliveryDetail, Page } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export type { Delivery, DeliveryDetail, DeliveryActionResult } from '@ebbgate/shared';

export const deliveryKeys = {
  all: ['deliveries'] as const,
  list: (q: Query) => ['deliveries', 'list', q] as const,
  detail: (id: string) => ['deliveries', 'detail', id] as const,
};

const enc = encodeURIComponent;

export function useDeliveries(q: Query) {
  return useQuery({
    queryKey: deliveryKeys.list(q),
    queryFn: ({ signal }) => api.get<Page<Delivery>>('/deliveries', q, signal),
    placeholderData: keepPreviousData,
  });
}
export function useDelivery(id: string | null) {
  return useQuery({
    queryKey: deliveryKeys.detail(id ?? ''),
    queryFn: ({ signal }) => api.get<DeliveryDetail>(`/deliveries/${enc(id!)}`, undefined, signal),
    enabled: !!id,
  });
}
/** Destinations for the filter select (names only). */
export function useDestinationOptions() {
  return useQuery({
    queryKey: ['deliveries', 'destination-options'] as const,
    queryFn: ({ signal }) => api.get<DestinationOption[] | Page<DestinationOption>>('/destinations', undefined, signal),
  });
}
export interface DestinationOption {
  id: string;
  name: string;
}
export function optionList(data: DestinationOption[] | Page<DestinationOption> | undefined): DestinationOption[] {
  if (!data) return [];
  return Array.isArray(data) ? data : data.items;
}

/** How long a bulk action follows one requeued delivery before reporting it as still queued. */
const FOLLOW_TRIES = 30;

/**
 * Requeues one delivery (retry: same payload; replay: rebuilt as now), then follows it until the
 * sender has tried it, so each item shows what the EHR actually answered.
 */
export async function requeueAndFollow(id: string, mode: 'retry' | 'replay'): Promise<string> {
  const answer = await api.post<DeliveryActionResult>(`/deliveries/${mode}`, { ids: [id] });
  const skipped = answer.skipped.find((s) => s.id === id);
  if (skipped) throw new Error(`not requeued: ${skipped.reason}`);
  for (let i = 0; i < FOLLOW_TRIES; i++) {
    await new Promise((r) => setTimeout(r, 1_000));
    const d = await api.get<Delivery>(`/deliveries/${enc(id)}`);
    if (d.status === 'delivered') return 'delivered';
    if (d.status === 'failed') throw new Error(`failed again: ${d.lastHttpStatus ?? ''} ${d.lastError ?? ''}`.trim());
    if (d.status !== 'pending') return d.status;
  }
  return 'queued (still waiting for the sender)';
}

export const discardDelivery = (id: string, reason: string) => api.post<unknown>(`/deliveries/${enc(id)}/discard`, { reason });

export function useInvalidateDeliveries() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: deliveryKeys.all });
}
