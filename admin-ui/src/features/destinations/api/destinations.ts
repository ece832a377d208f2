import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Destination as ApiDestination, Page } from '@ebbgate/shared';

type DestinationState = ApiDestination['state'];
import { api } from '@/lib/api-client';

export interface Destination {
  id: string;
  name: string;
  kind: string;
  paused: boolean;
  circuitState?: string;
  consecutiveFailures?: number;
  downSince?: string | null;
  lastSuccessAt?: string | null;
  lastFailureAt?: string | null;
  lastError?: string | null;
  configurationError?: string | null;
  /** The API's health state: up, paused, circuit-open, down, misconfigured. */
  state: DestinationState;
}

export const destinationKeys = { all: ['destinations'] as const };

export function useDestinations() {
  return useQuery({
    queryKey: destinationKeys.all,
    queryFn: ({ signal }) => api.get<Destination[] | Page<Destination>>('/destinations', undefined, signal),
    refetchInterval: 30_000,
  });
}

export function useToggleDestination() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (d: Destination) => api.post<unknown>(`/destinations/${encodeURIComponent(d.id)}/${d.paused ? 'resume' : 'pause'}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: destinationKeys.all }),
  });
}
