import { Link } from 'react-router-dom';
import { formatDateTime } from '@/lib/format';
import { StatusBadge } from '@/components/ui/badge';
import { JsonBlock } from '@/components/ui/page';
import type { ObservationSent } from '../api/assessments';

/** Each FHIR Observation as it was sent, with its delivery attempts. */
export function ObservationsSent({ observations, attemptsLink }: { observations: ObservationSent[]; attemptsLink?: string }) {
  if (observations.length === 0) {
    return <p className="text-sm text-muted">Nothing was sent for this window (withheld, or waiting for delivery).</p>;
  }
  return (
    <div className="flex flex-col gap-4">
      {observations.map((o, i) => (
        <div key={`${o.index}-${i}`} className="grid gap-3 lg:grid-cols-2">
          <div>
            <h3 className="mb-1 text-sm font-semibold">{o.index} · FHIR Observation as sent</h3>
            {o.resource ? (
              <JsonBlock label={`FHIR resource for ${o.index}`} value={o.resource} />
            ) : (
              <p className="text-sm text-muted">Not sent yet (no resource built).</p>
            )}
          </div>
          <div>
            <h3 className="mb-1 text-sm font-semibold">Delivery history</h3>
            {(o.deliveries ?? []).length === 0 ? (
              <p className="text-sm text-muted">No delivery recorded.</p>
            ) : (
              <table className="w-full text-xs" aria-label={`Deliveries of ${o.index}`}>
                <thead className="text-left text-muted">
                  <tr>
                    <th className="py-0.5">Kind</th>
                    <th>Status</th>
                    <th>Destination</th>
                    <th className="text-right">Attempts</th>
                    <th>Last answer</th>
                    <th>Delivered</th>
                  </tr>
                </thead>
                <tbody>
                  {o.deliveries!.map((d) => (
                    <tr key={d.id} className="border-t border-line/60 align-top">
                      <td className="py-0.5 pr-2">{d.kind === 'amend' ? 'amendment' : 'create'}</td>
                      <td className="pr-2">
                        <StatusBadge status={d.status} />
                      </td>
                      <td className="pr-2">{d.destinationId}</td>
                      <td className="num pr-2 text-right">{d.attemptCount}</td>
                      <td className="pr-2">
                        {d.lastHttpStatus ?? '—'}
                        {d.lastError ? <span className="block text-error">{d.lastError}</span> : null}
                      </td>
                      <td className="num">{formatDateTime(d.deliveredAt)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            )}
            {attemptsLink && (
              <p className="mt-1 text-xs">
                <Link className="text-ink-700 underline" to={attemptsLink}>
                  Every attempt and the EHR's answers
                </Link>
              </p>
            )}
          </div>
        </div>
      ))}
    </div>
  );
}
