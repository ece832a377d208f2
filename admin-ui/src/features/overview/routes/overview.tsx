import { Link } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import { formatDateTime } from '@/lib/format';
import { StatusBadge } from '@/components/ui/badge';
import { PageHeader, Panel } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { Sparkline } from '@/components/ui/sparkline';
import { Cautions } from '@/components/analysis/cautions';
import { useOverview } from '../api/overview';
import { Stat } from '../components/stat';

import { VERDICT_COLOR } from '@/components/analysis/verdict-mark';

const C = { good: '#2f6f4a', warn: '#8a5a00', bad: '#a3352b', ink: '#24505f' };

export function OverviewRoute() {
  const overview = useOverview();
  const { can } = useAuth();
  const link = (permission: Parameters<typeof can>[0], to: string) => (can(permission) ? to : undefined);

  if (overview.isPending) return <LoadingState label="Loading the overview…" />;
  if (overview.error) return <ErrorState error={overview.error} onRetry={() => overview.refetch()} />;
  const o = overview.data;
  const col = (rows: object[], k: string) => rows.map((r) => Number((r as Record<string, unknown>)[k] ?? 0));

  return (
    <>
      <PageHeader title="Overview" description={`Last ${o.windowMinutes} minutes, per minute · updated ${formatDateTime(o.generatedAt)}`} />
      <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-4">
        <Panel title="Inbound">
          <div className="grid grid-cols-2 gap-2">
            <Stat label="messages / min (5 min)" value={o.inbound.perMinute} to={link('inbound', '/inbound?outcome=accepted')} />
            <Stat label="accepted" value={o.inbound.accepted} tone="good" to={link('inbound', '/inbound?outcome=accepted')} />
            <Stat label="rejected" value={o.inbound.rejected} tone={o.inbound.rejected ? 'bad' : undefined} to={link('inbound', '/inbound?outcome=rejected')} />
            <Stat
              label="quarantined"
              value={o.inbound.quarantined}
              tone={o.inbound.quarantined ? 'warn' : undefined}
              to={link('inbound', '/inbound?outcome=quarantined')}
            />
          </div>
          <Sparkline
            label="Inbound messages per minute: accepted, rejected, quarantined"
            series={[col(o.inbound.series, 'accepted'), col(o.inbound.series, 'rejected'), col(o.inbound.series, 'quarantined')]}
            colors={[C.ink, C.bad, C.warn]}
          />
        </Panel>
        <Panel title="Assessments by verdict">
          <div className="grid grid-cols-3 gap-2">
            <Stat label="valid" value={o.assessments.valid} tone="good" to={link('assessments', '/assessments?verdict=valid')} />
            <Stat label="questionable" value={o.assessments.questionable} tone="questionable" to={link('assessments', '/assessments?verdict=questionable')} />
            <Stat label="not valid" value={o.assessments.notValid} tone="not-valid" to={link('assessments', '/assessments?verdict=not-valid')} />
          </div>
          <Sparkline
            label="Assessments per minute by verdict"
            series={[col(o.assessments.series, 'valid'), col(o.assessments.series, 'questionable'), col(o.assessments.series, 'notValid')]}
            colors={[VERDICT_COLOR.valid, VERDICT_COLOR.questionable, VERDICT_COLOR['not-valid']]}
          />
        </Panel>
        <Panel title="Delivery to the EHR">
          <div className="grid grid-cols-3 gap-2">
            <Stat label="in queue" value={o.delivery.queueDepth} to={link('deliveries', '/deliveries?status=pending')} />
            <Stat label="failed" value={o.delivery.failed} tone={o.delivery.failed ? 'bad' : undefined} to={link('deliveries', '/deliveries?status=failed')} />
            <Stat label="delivered" value={o.delivery.delivered} tone="good" to={link('deliveries', '/deliveries?status=delivered')} />
          </div>
          <Sparkline
            label="Deliveries per minute: delivered, failed"
            series={[col(o.delivery.series, 'delivered'), col(o.delivery.series, 'failed')]}
            colors={[C.good, C.bad]}
          />
        </Panel>
        <Panel title="Monitors and destinations">
          <Stat label="monitors sending / registered" value={`${o.monitors.live} / ${o.monitors.total}`} to={link('devices', '/monitors')} />
          <ul className="mt-2 flex flex-col gap-1 text-sm" aria-label="Destination health">
            {o.destinations.length === 0 && <li className="text-muted">No destinations configured.</li>}
            {o.destinations.map((d) => {
              const to = link('deliveries', `/deliveries?destination=${encodeURIComponent(d.id)}`);
              const body = (
                <>
                  <span className="flex-1 truncate">{d.name}</span>
                  <StatusBadge status={d.state} />
                </>
              );
              return (
                <li key={d.id} className="flex items-center gap-2">
                  {to ? (
                    <Link to={to} className="flex flex-1 items-center gap-2 rounded hover:bg-ink-50">
                      {body}
                    </Link>
                  ) : (
                    body
                  )}
                  {d.downSince && <span className="text-xs text-muted">since {formatDateTime(d.downSince)}</span>}
                </li>
              );
            })}
          </ul>
        </Panel>
      </div>
      <div className="mt-3">
        <Cautions compact />
      </div>
    </>
  );
}
