import { formatDateTime } from '@/lib/format';
import { StatusBadge } from '@/components/ui/badge';
import { JsonBlock } from '@/components/ui/page';
import type { ObservationSent } from '../api/assessments';

/** Each FHIR Observation as it was sent, with its delivery attempts. */
export function ObservationsSent({ observations }: { observations: ObservationSent[] }) {
  if (observations.length === 0) {
    return <p className="text-sm text-muted">Nothing was sent for this window (withheld, or waiting for delivery).</p>;
  }
  return (
    <div className="flex flex-col gap-4">
      {observations.map((o, i) => (
        <div key={`${o.index}-${i}`} className="grid gap-3 lg:grid-cols-2">
          <div>
            <h3 className="mb-1 text-sm font-semibold">{o.index} · FHIR Observation as sent</h3>
            <JsonBlock label={`FHIR resource for ${o.index}`} value={o.resource} />
          </div>
          <div>
            <h3 className="mb-1 text-sm font-semibold">Delivery history</h3>
            {(o.deliveries ?? []).length === 0 ? <p className="text-sm text-muted">No delivery recorded.</p> : (
              <ul className="flex flex-col gap-2">
                {o.deliveries!.map((d, k) => (
                  <li key={d.id ?? k} className="rounded border border-line p-2 text-sm">
                    <p className="flex items-center gap-2"><StatusBadge status={d.status} /> <span className="text-muted">{d.destination ?? d.destinationId ?? ''}</span></p>
                    {d.lastError && <p className="text-xs text-notvalid">{d.lastError}</p>}
                    {(d.attempts ?? []).length > 0 && (
                      <table className="mt-1 w-full text-xs" aria-label="Delivery attempts">
                        <thead className="text-left text-muted"><tr><th>At</th><th>HTTP</th><th>Outcome</th></tr></thead>
                        <tbody>{d.attempts!.map((at, j) => <tr key={j} className="border-t border-line/60"><td className="num">{formatDateTime(at.at)}</td><td className="num">{at.httpStatus ?? '—'}</td><td>{at.outcome}</td></tr>)}</tbody>
                      </table>
                    )}
                  </li>
                ))}
              </ul>
            )}
          </div>
        </div>
      ))}
    </div>
  );
}
