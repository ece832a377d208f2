import { useMemo, useState } from 'react';
import type { ApiKeyIssued, Monitor } from '@ebbgate/shared';
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime, formatNumber } from '@/lib/format';
import { useListState } from '@/hooks/use-list-state';
import { Badge, StatusBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { ConfirmDialog, Dialog } from '@/components/ui/dialog';
import { PageHeader } from '@/components/ui/page';
import { useToast } from '@/components/ui/toast';
import {
  useBedOptions,
  useCreateMonitor,
  useDeleteMonitor,
  useIssueApiKey,
  useLatestFlushTest,
  useMonitors,
  useProfileOptions,
  useRevokeApiKey,
  useUpdateMonitor,
} from '../api/devices';
import { Link } from 'react-router-dom';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { MonitorForm } from '../components/monitor-form';
import { ApiKeyDialog } from '../components/api-key-dialog';
import { EdgeCredentialsSection } from '../components/edge-credentials-section';
import { FlushTestSummary } from '@/components/analysis/line-checks';

type Pending = { kind: 'create' } | { kind: 'edit' | 'issue' | 'revoke' | 'delete'; monitor: Monitor } | null;

/** The latest flush test the engine measured on this monitor's arterial line (last 24 h). */
function FlushTestDialogBody({ monitorId }: { monitorId: string }) {
  const q = useLatestFlushTest(monitorId);
  if (q.isPending) return <LoadingState label="Looking for the latest flush test…" />;
  if (q.error) return <ErrorState error={q.error} onRetry={() => q.refetch()} />;
  const latest = q.data.latest;
  if (!latest) return <p className="text-sm text-muted">No flush test measured on this monitor in the last 24 hours.</p>;
  return (
    <div className="flex flex-col gap-2 text-sm" data-testid="latest-flush-test">
      <p>
        Window ending {formatDateTime(latest.windowEnd)} ·{' '}
        <Link className="text-ink-700 underline" to={`/assessments/${encodeURIComponent(latest.assessmentId)}`}>
          open the assessment
        </Link>
      </p>
      <FlushTestSummary test={latest.flushTest as Parameters<typeof FlushTestSummary>[0]['test']} />
    </div>
  );
}

const ENABLED_OPTIONS = [
  { value: 'true', label: 'enabled' },
  { value: 'false', label: 'disabled' },
];

export function MonitorsRoute() {
  const list = useListState({ sort: 'identifier', order: 'asc' });
  const monitors = useMonitors(list.query);
  const profiles = useProfileOptions();
  const beds = useBedOptions();
  const create = useCreateMonitor();
  const update = useUpdateMonitor();
  const remove = useDeleteMonitor();
  const issue = useIssueApiKey();
  const revoke = useRevokeApiKey();
  const toast = useToast();
  const { can } = useAuth();
  const manage = can('manageDevices');
  const edge = can('edgeCredentials');
  const [pending, setPending] = useState<Pending>(null);
  const [lineCheck, setLineCheck] = useState<Monitor | null>(null);
  const [edgeOf, setEdgeOf] = useState<Monitor | null>(null);
  const [issued, setIssued] = useState<{ key: ApiKeyIssued; monitor: string } | null>(null);
  const profileName = useMemo(() => new Map((profiles.data?.items ?? []).map((p) => [p.id, p.name])), [profiles.data]);
  const bedName = useMemo(() => new Map((beds.data?.items ?? []).map((b) => [b.id, `${b.name} · ${b.unit}`])), [beds.data]);
  const close = () => {
    setPending(null);
    create.reset();
    update.reset();
    remove.reset();
    issue.reset();
    revoke.reset();
  };

  const columns: Column<Monitor>[] = [
    { key: 'identifier', header: 'Identifier', sortField: 'identifier', render: (m) => <span className="font-mono text-xs font-medium">{m.identifier}</span> },
    { key: 'profile', header: 'Profile', render: (m) => (m.profileId ? (profileName.get(m.profileId) ?? m.profileId) : <Badge tone="warn">no profile</Badge>) },
    { key: 'bed', header: 'Bed', render: (m) => (m.bedId ? (bedName.get(m.bedId) ?? m.bedId) : <span className="text-muted">not assigned</span>) },
    { key: 'enabled', header: 'State', sortField: 'enabled', render: (m) => <StatusBadge status={m.enabled ? 'enabled' : 'disabled'} /> },
    { key: 'lastSeenAt', header: 'Last data', sortField: 'lastSeenAt', render: (m) => <span className="num">{formatDateTime(m.lastSeenAt)}</span> },
    {
      key: 'dataRate',
      header: 'Samples/s',
      className: 'text-right',
      sortField: 'dataRate',
      render: (m) => <span className="num">{formatNumber(m.dataRate, 0)}</span>,
    },
    { key: 'key', header: 'API key', render: (m) => (m.hasApiKey ? <Badge tone="good">issued</Badge> : <Badge>none</Badge>) },
    {
      key: 'line',
      header: 'Arterial line',
      render: (m) => (
        <Button size="sm" variant="ghost" onClick={() => setLineCheck(m)} aria-label={`Latest flush test of ${m.identifier}`}>
          Latest flush test
        </Button>
      ),
    },
    ...(edge
      ? [
          {
            key: 'edge',
            header: 'Device edge',
            render: (m: Monitor) => (
              <Button size="sm" variant="ghost" onClick={() => setEdgeOf(m)} aria-label={`Device edge of ${m.identifier}`}>
                Device edge
              </Button>
            ),
          },
        ]
      : []),
    ...(manage
      ? [
          {
            key: 'actions',
            header: 'Actions',
            render: (m: Monitor) => (
              <span className="flex flex-wrap gap-1">
                <Button size="sm" onClick={() => setPending({ kind: 'edit', monitor: m })}>
                  Edit
                </Button>
                <Button
                  size="sm"
                  onClick={() => (m.hasApiKey ? setPending({ kind: 'issue', monitor: m }) : issueKey(m))}
                  busy={issue.isPending && issue.variables === m.id}
                >
                  {m.hasApiKey ? 'Replace key' : 'Issue key'}
                </Button>
                {m.hasApiKey && (
                  <Button size="sm" variant="ghost" onClick={() => setPending({ kind: 'revoke', monitor: m })}>
                    Revoke key
                  </Button>
                )}
                <Button size="sm" variant="ghost" onClick={() => setPending({ kind: 'delete', monitor: m })}>
                  Remove
                </Button>
              </span>
            ),
          },
        ]
      : []),
  ];

  function issueKey(m: Monitor) {
    issue.mutate(m.id, {
      onSuccess: (key) => {
        setIssued({ key, monitor: m.identifier });
        setPending(null);
      },
      onError: (e) => toast.error(`Could not issue a key: ${errorMessage(e)}`),
    });
  }

  return (
    <>
      <PageHeader
        title="Monitors"
        description="Bedside monitors allowed to send waveforms, their profile, bed and API key."
        actions={
          manage ? (
            <Button variant="primary" onClick={() => setPending({ kind: 'create' })}>
              Add monitor
            </Button>
          ) : undefined
        }
      />
      <ListFilters
        list={list}
        fields={[
          { key: 'search', label: 'Search', kind: 'text', width: 'w-56', placeholder: 'identifier' },
          {
            key: 'profileId',
            label: 'Profile',
            kind: 'select',
            width: 'w-56',
            options: (profiles.data?.items ?? []).map((p) => ({ value: p.id, label: p.name })),
          },
          {
            key: 'bedId',
            label: 'Bed',
            kind: 'select',
            width: 'w-44',
            options: (beds.data?.items ?? []).map((b) => ({ value: b.id, label: `${b.name} · ${b.unit}` })),
          },
          { key: 'enabled', label: 'State', kind: 'select', width: 'w-36', options: ENABLED_OPTIONS },
        ]}
      />
      <DataTable
        caption="Monitors"
        columns={columns}
        {...queryTableProps(monitors, list)}
        rowId={(m) => m.id}
        emptyTitle="No monitors mapped yet"
        emptyHint="Add a monitor by its identifier, pick its profile and bed, then issue its API key."
      />

      <Dialog open={pending?.kind === 'create'} title="Add monitor" onClose={close}>
        <MonitorForm
          busy={create.isPending}
          error={create.error}
          onCancel={close}
          onSubmit={(v) =>
            create.mutate(v, {
              onSuccess: (m) => {
                toast.success(`Monitor ${m.identifier} added`);
                close();
              },
            })
          }
        />
      </Dialog>
      {pending?.kind === 'edit' && (
        <Dialog open title={`Edit monitor ${pending.monitor.identifier}`} onClose={close}>
          <MonitorForm
            monitor={pending.monitor}
            busy={update.isPending}
            error={update.error}
            onCancel={close}
            onSubmit={(v) =>
              update.mutate(
                { id: pending.monitor.id, body: { identifier: v.identifier, profileId: v.profileId ?? null, bedId: v.bedId ?? null, enabled: v.enabled } },
                {
                  onSuccess: () => {
                    toast.success('Monitor saved');
                    close();
                  },
                },
              )
            }
          />
        </Dialog>
      )}
      <ConfirmDialog
        open={pending?.kind === 'issue'}
        title="Replace API key"
        confirmLabel="Issue new key"
        danger
        message={
          <>
            The current key of <strong>{pending && 'monitor' in pending ? pending.monitor.identifier : ''}</strong> stops working at once; the adapter needs the
            new key.
          </>
        }
        busy={issue.isPending}
        error={issue.error ? errorMessage(issue.error) : null}
        onClose={close}
        onConfirm={() => pending && 'monitor' in pending && issueKey(pending.monitor)}
      />
      <ConfirmDialog
        open={pending?.kind === 'revoke'}
        title="Revoke API key"
        confirmLabel="Revoke"
        danger
        message={<>The monitor can no longer send data until a new key is issued. Batches it sends meanwhile are refused with 401.</>}
        busy={revoke.isPending}
        error={revoke.error ? errorMessage(revoke.error) : null}
        onClose={close}
        onConfirm={() =>
          pending &&
          'monitor' in pending &&
          revoke.mutate(pending.monitor.id, {
            onSuccess: () => {
              toast.success('Key revoked');
              close();
            },
          })
        }
      />
      <ConfirmDialog
        open={pending?.kind === 'delete'}
        title="Remove monitor"
        confirmLabel="Remove"
        danger
        message={
          <>
            Remove <strong>{pending && 'monitor' in pending ? pending.monitor.identifier : ''}</strong>? Its stored assessments stay.
          </>
        }
        busy={remove.isPending}
        error={remove.error ? errorMessage(remove.error) : null}
        onClose={close}
        onConfirm={() =>
          pending &&
          'monitor' in pending &&
          remove.mutate(pending.monitor.id, {
            onSuccess: () => {
              toast.success('Monitor removed');
              close();
            },
          })
        }
      />
      {lineCheck && (
        <Dialog open title={`Arterial line of ${lineCheck.identifier}`} onClose={() => setLineCheck(null)}>
          <FlushTestDialogBody monitorId={lineCheck.id} />
        </Dialog>
      )}
      {edgeOf && (
        <Dialog open wide title={`Device edge of ${edgeOf.identifier}`} onClose={() => setEdgeOf(null)}>
          <EdgeCredentialsSection scope="monitor" id={edgeOf.id} />
        </Dialog>
      )}
      <ApiKeyDialog issued={issued?.key ?? null} monitor={issued?.monitor ?? ''} onClose={() => setIssued(null)} />
    </>
  );
}
