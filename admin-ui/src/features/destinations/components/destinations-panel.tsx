import type { Destination as ApiDestination, Page } from '@ebbgate/shared';

type DestinationState = ApiDestination['state'];
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime } from '@/lib/format';
import { StatusBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ErrorState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { useDestinations, useToggleDestination, type Destination } from '../api/destinations';

export function destinationList(data: Destination[] | Page<Destination> | undefined): Destination[] {
  if (!data) return [];
  return Array.isArray(data) ? data : data.items;
}

/** A destination's health: the API's own state (the overview shows the same words); no second vocabulary here. */
export function destinationState(d: Destination): DestinationState {
  return d.state;
}

/** Each EHR destination with its health, and pause/resume for operators. */
export function DestinationsPanel() {
  const destinations = useDestinations();
  const toast = useToast();
  const { can } = useAuth();
  const toggle = useToggleDestination();
  const onToggle = (d: Destination) =>
    toggle.mutate(d, {
      onSuccess: () => toast.success(`${d.name} ${d.paused ? 'resumed' : 'paused'}`),
      onError: (e) => toast.error(errorMessage(e)),
    });
  if (destinations.error) return <ErrorState error={destinations.error} onRetry={() => destinations.refetch()} />;
  const list = destinationList(destinations.data);
  if (list.length === 0) return null;
  return (
    <section aria-label="Destinations" className="mb-3 grid gap-2 md:grid-cols-2 xl:grid-cols-3">
      {list.map((d) => (
        <div key={d.id} className="flex items-start justify-between gap-2 rounded-md border border-line bg-white px-3 py-2 text-sm" data-destination={d.id}>
          <div className="min-w-0">
            <p className="flex items-center gap-2 font-medium">
              {d.name} <StatusBadge status={destinationState(d)} />
            </p>
            <p className="text-xs text-muted">
              {d.kind} · last success {formatDateTime(d.lastSuccessAt)}
            </p>
            {(d.configurationError || d.lastError) && (
              <p className="truncate text-xs text-error" title={d.configurationError ?? d.lastError ?? ''}>
                {d.configurationError ?? d.lastError}
              </p>
            )}
          </div>
          {can('manageDestinations') && (
            <Button size="sm" busy={toggle.isPending && toggle.variables?.id === d.id} onClick={() => onToggle(d)}>
              {d.paused ? 'Resume' : 'Pause'}
            </Button>
          )}
        </div>
      ))}
    </section>
  );
}
