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

export interface Destination {
  id: string; name: string; kind: string; paused: boolean; circuitState?: string; consecutiveFailures?: number;
  downSince?: string | null; lastSuccessAt?: string | null; lastFailureAt?: string | null; lastError?: string | null; configurationError?: string | null; state?: string;
}

export const deliveryKeys = {
  all: ['deliveries'] as const,
  list: (q: Query) => ['deliveries', 'list', q] as const,
  detail: (id: string) => ['deliveries', 'detail', id] as const,
  destinations: ['destinations'] as const,
};

const enc = encodeURIComponent;

export function useDeliveries(q: Query) {
  return useQuery({ queryKey: deliveryKeys.list(q), queryFn: ({ signal }) => api.get<Page<Delivery>>('/deliveries', q, signal), placeholderData: keepPreviousData });
}
export function useDelivery(id: string | null) {
  return useQuery({ queryKey: deliveryKeys.detail(id ?? ''), queryFn: ({ signal }) => api.get<DeliveryDetail>(`/deliveries/${enc(id!)}`, undefined, signal), enabled: !!id });
}
export function useDestinations() {
  return useQuery({ queryKey: deliveryKeys.destinations, queryFn: ({ signal }) => api.get<Destination[] | Page<Destination>>('/destinations', undefined, signal) });
}

/** One retry per call so the screen can show each item's outcome. */
export const retryDelivery = (id: string) => api.post<unknown>('/deliveries/retry', { ids: [id] });
export const discardDelivery = (id: string, reason: string) => api.post<unknown>(`/deliveries/${enc(id)}/discard`, { reason });

export function useInvalidateDeliveries() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: deliveryKeys.all });
}
