import { keepPreviousData, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export type DeliveryStatus = 'pending' | 'waiting-context' | 'delivered' | 'failed' | 'discarded' | 'withheld';

export interface Delivery {
  id: string;
  assessmentId: string;
  destinationId: string;
  indexName: string;
  kind: 'create' | 'amend';
  status: DeliveryStatus;
  identifier?: string;
  patientRef: string | null;
  attemptCount: number;
  nextAttemptAt: string | null;
  lastHttpStatus: number | null;
  lastError: string | null;
  discardReason?: string | null;
  createdAt: string;
  deliveredAt: string | null;
}
export interface DeliveryAttempt { at: string; durationMs?: number; httpStatus: number | null; outcome: string; detail?: string | null; response?: unknown }
export interface DeliveryDetail extends Delivery { payload: unknown; attempts: DeliveryAttempt[] }

export const deliveryKeys = {
  all: ['deliveries'] as const,
  list: (q: Query) => ['deliveries', 'list', q] as const,
  detail: (id: string) => ['deliveries', 'detail', id] as const,
};

const enc = encodeURIComponent;

export function useDeliveries(q: Query) {
  return useQuery({ queryKey: deliveryKeys.list(q), queryFn: ({ signal }) => api.get<Page<Delivery>>('/deliveries', q, signal), placeholderData: keepPreviousData });
}
export function useDelivery(id: string | null) {
  return useQuery({ queryKey: deliveryKeys.detail(id ?? ''), queryFn: ({ signal }) => api.get<DeliveryDetail>(`/deliveries/${enc(id!)}`, undefined, signal), enabled: !!id });
}
/** Destinations for the filter select (names only). */
export function useDestinationOptions() {
  return useQuery({ queryKey: ['deliveries', 'destination-options'] as const, queryFn: ({ signal }) => api.get<DestinationOption[] | Page<DestinationOption>>('/destinations', undefined, signal) });
}
export interface DestinationOption { id: string; name: string }
export function optionList(data: DestinationOption[] | Page<DestinationOption> | undefined): DestinationOption[] {
  if (!data) return [];
  return Array.isArray(data) ? data : data.items;
}

/** One retry per call so the screen can show each item's outcome. */
export const retryDelivery = (id: string) => api.post<unknown>('/deliveries/retry', { ids: [id] });
export const discardDelivery = (id: string, reason: string) => api.post<unknown>(`/deliveries/${enc(id)}/discard`, { reason });

export function useInvalidateDeliveries() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: deliveryKeys.all });
}
