import { PatientLabel } from '@/components/ui/patient';
import { useState, type ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import { formatDateTime } from '@/lib/format';
import { outcomeOf } from '@/lib/outcome';
import { useListState } from '@/hooks/use-list-state';
import { useBulkAction } from '@/hooks/use-bulk-action';
import { StatusBadge } from '@/components/ui/badge';
import { BulkProgress } from '@/components/ui/bulk-progress';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { ConfirmDialog } from '@/components/ui/dialog';
import { PageHeader } from '@/components/ui/page';
import { useToast } from '@/components/ui/toast';
import { discardDelivery, optionList, requeueAndFollow, useDeliveries, useDestinationOptions, useInvalidateDeliveries, type Delivery } from '../api/deliveries';
import { DeliveryDetailDialog } from '../components/delivery-detail';

const STATUSES = ['failed', 'pending', 'waiting-context', 'delivered', 'discarded', 'withheld'];

/** `destinations` is the destinations panel, composed in by the app (features do not import each other). */
export function DeliveriesRoute({ destinations: destinationsPanel }: { destinations?: ReactNode }) {
  const list = useListState({ sort: 'createdAt', order: 'desc' }, { status: 'failed' });
  const deliveries = useDeliveries(list.query);
  const destinations = useDestinationOptions();
  const invalidate = useInvalidateDeliveries();
  const toast = useToast();
  const { can } = useAuth();
  const manage = can('manageDeliveries');
  const [selected, setSelected] = useState<Set<string>>(new Set());
  const [open, setOpen] = useState<string | null>(null);
  const [confirm, setConfirm] = useState<'retry' | 'replay' | 'discard' | null>(null);
  const retry = useBulkAction<string>(
    (id) => requeueAndFollow(id, 'retry'),
    (r) => r,
  );
  const replay = useBulkAction<string>(
    (id) => requeueAndFollow(id, 'replay'),
    (r) => r,
  );
  const discard = useBulkAction<unknown, string>((id, reason) => discardDelivery(id, reason), outcomeOf);
  const destName = new Map(optionList(destinations.data).map((d) => [d.id, d.name]));

  const runBulk = async (kind: 'retry' | 'replay' | 'discard', reason: string) => {
    const ids = [...selected];
    setConfirm(null);
    if (kind === 'retry') await retry.start(ids);
    else if (kind === 'replay') await replay.start(ids);
    else await discard.start(ids, reason);
    setSelected(new Set());
    invalidate();
    toast.info(`${kind === 'retry' ? 'Retry' : kind === 'replay' ? 'Replay' : 'Discard'} finished for ${ids.length} item${ids.length === 1 ? '' : 's'}`);
  };

  const columns: Column<Delivery>[] = [
    { key: 'createdAt', header: 'Queued', sortField: 'createdAt', render: (d) => <span className="num whitespace-nowrap">{formatDateTime(d.createdAt)}</span> },
    { key: 'status', header: 'Status', sortField: 'status', render: (d) => <StatusBadge status={d.status} /> },
    {
      key: 'index',
      header: 'Index',
      render: (d) => (
        <span>
          {d.index}
          {d.kind === 'amend' ? <span className="text-xs text-muted"> (amend)</span> : null}
        </span>
      ),
    },
    { key: 'destination', header: 'Destination', render: (d) => destName.get(d.destinationId) ?? d.destinationId },
    { key: 'patient', header: 'Patient', render: (d) => <PatientLabel name={d.patientName} mrn={d.patientMrn} patientRef={d.patientRef} /> },
    { key: 'attempts', header: 'Attempts', sortField: 'attemptCount', className: 'text-right', render: (d) => <span className="num">{d.attemptCount}</span> },
    {
      key: 'last',
      header: 'Last answer',
      render: (d) => (
        <span className="text-xs">
          {d.lastHttpStatus ? <span className="num mr-1 font-medium">{d.lastHttpStatus}</span> : null}
          <span className="text-muted">{d.lastError ?? ''}</span>
        </span>
      ),
    },
    {
      key: 'assessment',
      header: 'Assessment',
      render: (d) => (
        <Link className="text-xs text-ink-700 underline" to={`/assessments/${d.assessmentId}`}>
          open
        </Link>
      ),
    },
    {
      key: 'detail',
      header: '',
      render: (d) => (
        <Button size="sm" onClick={() => setOpen(d.id)}>
          Details
        </Button>
      ),
    },
  ];

  const busy = retry.running || replay.running || discard.running;

  return (
    <>
      <PageHeader
        title="Deliveries"
        description="Observations queued for, sent to, or refused by the EHR. Failed ones can be retried or discarded with a reason."
      />
      {destinationsPanel}
      <ListFilters
        list={list}
        timeRange
        fields={[
          { key: 'status', label: 'Status', kind: 'select', width: 'w-40', options: STATUSES.map((s) => ({ value: s, label: s })) },
          {
            key: 'destination',
            label: 'Destination',
            kind: 'select',
            width: 'w-48',
            options: optionList(destinations.data).map((d) => ({ value: d.id, label: d.name })),
          },
        ]}
      >
        {manage && (
          <div className="ml-auto flex items-end gap-2 self-end">
            <Button variant="primary" disabled={selected.size === 0 || busy} busy={retry.running} onClick={() => setConfirm('retry')}>
              Retry selected ({selected.size})
            </Button>
            <Button
              disabled={selected.size === 0 || busy}
              busy={replay.running}
              onClick={() => setConfirm('replay')}
              title="Rebuild with today's patient context, codes and settings, then send"
            >
              Replay selected
            </Button>
            <Button variant="danger" disabled={selected.size === 0 || busy} busy={discard.running} onClick={() => setConfirm('discard')}>
              Discard selected…
            </Button>
          </div>
        )}
      </ListFilters>
      <BulkProgress title="Retry" items={retry.items} />
      <BulkProgress title="Replay" items={replay.items} />
      <BulkProgress title="Discard" items={discard.items} />
      <DataTable
        caption="Deliveries"
        columns={columns}
        {...queryTableProps(deliveries, list)}
        rowId={(d) => d.id}
        selected={manage ? selected : undefined}
        onSelectedChange={manage ? setSelected : undefined}
        emptyTitle={list.filters.status === 'failed' ? 'No failed deliveries' : 'No deliveries match'}
        emptyHint="Everything queued has reached the EHR, or the filters exclude it."
      />
      <ConfirmDialog
        open={confirm === 'retry'}
        title="Retry deliveries"
        confirmLabel={`Retry ${selected.size}`}
        message={
          <>
            Send the {selected.size} selected Observation{selected.size === 1 ? '' : 's'} to the EHR again now. Each one's outcome is shown as it finishes.
          </>
        }
        onClose={() => setConfirm(null)}
        onConfirm={() => runBulk('retry', '')}
      />
      <ConfirmDialog
        open={confirm === 'replay'}
        title="Replay deliveries"
        confirmLabel={`Replay ${selected.size}`}
        message={
          <>
            Rebuild the {selected.size} selected Observation{selected.size === 1 ? '' : 's'} with the current patient context, codes and settings, and send
            again. The EHR sees the same identifier, so nothing is duplicated.
          </>
        }
        onClose={() => setConfirm(null)}
        onConfirm={() => runBulk('replay', '')}
      />
      <ConfirmDialog
        open={confirm === 'discard'}
        title="Discard deliveries"
        danger
        confirmLabel={`Discard ${selected.size}`}
        reasonLabel="Reason (kept in the audit log)"
        message={
          <>
            The {selected.size} selected Observation{selected.size === 1 ? '' : 's'} will not be sent. The assessments stay stored.
          </>
        }
        onClose={() => setConfirm(null)}
        onConfirm={(reason) => runBulk('discard', reason)}
      />
      <DeliveryDetailDialog id={open} onClose={() => setOpen(null)} canManage={manage} />
    </>
  );
}
