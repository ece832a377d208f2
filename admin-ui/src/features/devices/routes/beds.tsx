import { useMemo, useState } from 'react';
import type { Bed } from '@ebbgate/shared';
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { useListState } from '@/hooks/use-list-state';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { ConfirmDialog, Dialog } from '@/components/ui/dialog';
import { SelectField } from '@/components/ui/field';
import { PageHeader } from '@/components/ui/page';
import { useToast } from '@/components/ui/toast';
import { useBeds, useDeleteBed, useMonitorOptions, useSaveBed, useUpdateMonitor } from '../api/devices';
import { BedForm } from '../components/bed-form';

type Pending = { kind: 'create' } | { kind: 'edit' | 'delete' | 'assign'; bed: Bed } | null;

export function BedsRoute() {
  const list = useListState({ sort: 'name', order: 'asc' });
  const beds = useBeds(list.query);
  const monitors = useMonitorOptions();
  const save = useSaveBed();
  const remove = useDeleteBed();
  const assign = useUpdateMonitor();
  const toast = useToast();
  const { can } = useAuth();
  const manage = can('manageDevices');
  const [pending, setPending] = useState<Pending>(null);
  const [monitorId, setMonitorId] = useState('');
  const monitorName = useMemo(() => new Map((monitors.data?.items ?? []).map((m) => [m.id, m.identifier])), [monitors.data]);
  const close = () => {
    setPending(null);
    save.reset();
    remove.reset();
    assign.reset();
  };

  const columns: Column<Bed>[] = [
    { key: 'name', header: 'Bed', sortField: 'name', render: (b) => <span className="font-medium">{b.name}</span> },
    { key: 'unit', header: 'Unit', sortField: 'unit', render: (b) => b.unit },
    {
      key: 'location',
      header: 'EHR location',
      sortField: 'locationIdentifier',
      render: (b) => <span className="font-mono text-xs">{b.locationIdentifier}</span>,
    },
    {
      key: 'monitor',
      header: 'Monitor',
      render: (b) =>
        b.monitorId ? <span className="font-mono text-xs">{monitorName.get(b.monitorId) ?? b.monitorId}</span> : <span className="text-muted">none</span>,
    },
    ...(manage
      ? [
          {
            key: 'actions',
            header: 'Actions',
            render: (b: Bed) => (
              <span className="flex gap-1">
                <Button
                  size="sm"
                  onClick={() => {
                    setMonitorId(b.monitorId ?? '');
                    setPending({ kind: 'assign', bed: b });
                  }}
                >
                  Assign monitor
                </Button>
                <Button size="sm" onClick={() => setPending({ kind: 'edit', bed: b })}>
                  Edit
                </Button>
                <Button size="sm" variant="ghost" onClick={() => setPending({ kind: 'delete', bed: b })}>
                  Remove
                </Button>
              </span>
            ),
          },
        ]
      : []),
  ];

  return (
    <>
      <PageHeader
        title="Beds"
        description="Beds and the EHR location each maps to; a monitor on a bed gives its Observations their location and patient."
        actions={
          manage ? (
            <Button variant="primary" onClick={() => setPending({ kind: 'create' })}>
              Add bed
            </Button>
          ) : undefined
        }
      />
      <ListFilters list={list} fields={[{ key: 'search', label: 'Search', kind: 'text', width: 'w-56', placeholder: 'bed, unit or EHR location' }]} />
      <DataTable
        caption="Beds"
        columns={columns}
        {...queryTableProps(beds, list)}
        rowId={(b) => b.id}
        emptyTitle="No beds yet"
        emptyHint="Add the beds whose monitors will send data."
      />
      <Dialog open={pending?.kind === 'create'} title="Add bed" onClose={close}>
        <BedForm
          busy={save.isPending}
          error={save.error}
          onCancel={close}
          onSubmit={(body) =>
            save.mutate(
              { body },
              {
                onSuccess: (b) => {
                  toast.success(`Bed ${b.name} added`);
                  close();
                },
              },
            )
          }
        />
      </Dialog>
      {pending?.kind === 'edit' && (
        <Dialog open title={`Edit bed ${pending.bed.name}`} onClose={close}>
          <BedForm
            bed={pending.bed}
            busy={save.isPending}
            error={save.error}
            onCancel={close}
            onSubmit={(body) =>
              save.mutate(
                { id: pending.bed.id, body },
                {
                  onSuccess: () => {
                    toast.success('Bed saved');
                    close();
                  },
                },
              )
            }
          />
        </Dialog>
      )}
      {pending?.kind === 'assign' && (
        <Dialog
          open
          title={`Monitor on ${pending.bed.name}`}
          onClose={close}
          footer={
            <>
              <Button onClick={close}>Cancel</Button>
              {pending.bed.monitorId && (
                <Button
                  variant="ghost"
                  busy={assign.isPending}
                  onClick={() =>
                    assign.mutate(
                      { id: pending.bed.monitorId!, body: { bedId: null } },
                      {
                        onSuccess: () => {
                          toast.success('Monitor taken off the bed');
                          close();
                        },
                      },
                    )
                  }
                >
                  Take monitor off
                </Button>
              )}
              <Button
                variant="primary"
                disabled={!monitorId}
                busy={assign.isPending}
                onClick={() =>
                  assign.mutate(
                    { id: monitorId, body: { bedId: pending.bed.id } },
                    {
                      onSuccess: () => {
                        toast.success('Monitor assigned');
                        close();
                      },
                    },
                  )
                }
              >
                Assign
              </Button>
            </>
          }
        >
          <SelectField
            label="Monitor"
            placeholder="choose a monitor"
            value={monitorId}
            onChange={(e) => setMonitorId(e.target.value)}
            options={(monitors.data?.items ?? []).map((m) => ({
              value: m.id,
              label: `${m.identifier}${m.bedId && m.bedId !== pending.bed.id ? ' (on another bed)' : ''}`,
            }))}
            hint="A monitor sits on one bed at a time; assigning it here moves it."
          />
          {assign.error && (
            <p role="alert" className="mt-2 text-sm text-error">
              {errorMessage(assign.error)}
            </p>
          )}
        </Dialog>
      )}
      <ConfirmDialog
        open={pending?.kind === 'delete'}
        title="Remove bed"
        danger
        confirmLabel="Remove"
        message={
          <>
            Remove bed <strong>{pending && 'bed' in pending ? pending.bed.name : ''}</strong>? A monitor on it becomes unassigned.
          </>
        }
        busy={remove.isPending}
        error={remove.error ? errorMessage(remove.error) : null}
        onClose={close}
        onConfirm={() =>
          pending &&
          'bed' in pending &&
          remove.mutate(pending.bed.id, {
            onSuccess: () => {
              toast.success('Bed removed');
              close();
            },
          })
        }
      />
    </>
  );
}
