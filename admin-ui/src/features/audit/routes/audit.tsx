import { useState } from 'react';
import type { AuditEntry } from '@ebbgate/shared';
import { formatDateTime, localInputToIso } from '@/lib/format';
import { useListState } from '@/hooks/use-list-state';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { Dialog } from '@/components/ui/dialog';
import { SelectField, TextField } from '@/components/ui/field';
import { FilterBar, JsonBlock, PageHeader, DefinitionList } from '@/components/ui/page';
import { useAuditEntries } from '../api/audit';

const ENTITY_TYPES = ['user', 'monitor', 'monitor-profile', 'bed', 'assessment', 'delivery', 'destination', 'inbound-message', 'settings'];

export function AuditRoute() {
  const list = useListState({ sort: 'at', order: 'desc' });
  const [fromLocal, setFromLocal] = useState('');
  const [toLocal, setToLocal] = useState('');
  const entries = useAuditEntries(list.query);
  const [open, setOpen] = useState<AuditEntry | null>(null);

  const columns: Column<AuditEntry>[] = [
    { key: 'at', header: 'When', sortField: 'at', render: (a) => <span className="num whitespace-nowrap">{formatDateTime(a.at)}</span> },
    {
      key: 'actor',
      header: 'Who',
      sortField: 'actorName',
      render: (a) => (
        <span>
          {a.actorName ?? a.actorId ?? '—'} <Badge>{a.actorType}</Badge>
        </span>
      ),
    },
    { key: 'action', header: 'Action', sortField: 'action', render: (a) => <code className="text-xs">{a.action}</code> },
    {
      key: 'entity',
      header: 'On',
      render: (a) => (
        <span>
          {a.entityType}
          {a.entityId ? <span className="text-muted"> · {a.entityId}</span> : null}
        </span>
      ),
    },
    { key: 'requestId', header: 'Request', render: (a) => <span className="font-mono text-xs text-muted">{a.requestId ?? '—'}</span> },
    {
      key: 'detail',
      header: '',
      render: (a) => (
        <Button size="sm" onClick={() => setOpen(a)}>
          Details
        </Button>
      ),
    },
  ];

  const clear = () => {
    list.clearFilters();
    setFromLocal('');
    setToLocal('');
  };

  return (
    <>
      <PageHeader title="Audit log" description="Every change and every sign-in, with who did it and what it was before and after." />
      <FilterBar onClear={clear}>
        <TextField
          label="Who"
          placeholder="user name"
          value={list.filters.actor ?? ''}
          onChange={(e) => list.setFilter('actor', e.target.value)}
          wrapClassName="w-40"
        />
        <TextField
          label="Action"
          placeholder="e.g. user.create"
          value={list.filters.action ?? ''}
          onChange={(e) => list.setFilter('action', e.target.value)}
          wrapClassName="w-44"
        />
        <SelectField
          label="On"
          placeholder="any"
          options={ENTITY_TYPES.map((t) => ({ value: t, label: t }))}
          value={list.filters.entityType ?? ''}
          onChange={(e) => list.setFilter('entityType', e.target.value)}
          wrapClassName="w-40"
        />
        <TextField label="Entity id" value={list.filters.entityId ?? ''} onChange={(e) => list.setFilter('entityId', e.target.value)} wrapClassName="w-40" />
        <TextField
          label="From"
          type="datetime-local"
          value={fromLocal}
          onChange={(e) => {
            setFromLocal(e.target.value);
            list.setFilter('from', localInputToIso(e.target.value));
          }}
          wrapClassName="w-48"
        />
        <TextField
          label="To"
          type="datetime-local"
          value={toLocal}
          onChange={(e) => {
            setToLocal(e.target.value);
            list.setFilter('to', localInputToIso(e.target.value));
          }}
          wrapClassName="w-48"
        />
      </FilterBar>
      <DataTable
        caption="Audit entries"
        columns={columns}
        rows={entries.data?.items}
        total={entries.data?.total}
        rowId={(a) => a.id}
        params={list.params}
        onParamsChange={list.setParams}
        loading={entries.isPending}
        fetching={entries.isFetching}
        error={entries.error}
        onRetry={() => entries.refetch()}
        emptyTitle="No audit entries match these filters"
      />
      <Dialog open={!!open} title="Audit entry" onClose={() => setOpen(null)} wide>
        {open && (
          <div className="flex flex-col gap-3">
            <DefinitionList
              items={[
                ['When', formatDateTime(open.at)],
                ['Who', `${open.actorName ?? open.actorId ?? '—'} (${open.actorType})`],
                ['Action', open.action],
                ['On', `${open.entityType} ${open.entityId ?? ''}`],
                ['Request', open.requestId ?? '—'],
              ]}
            />
            <div className="grid grid-cols-2 gap-3">
              <div>
                <h3 className="mb-1 text-xs font-semibold">Before</h3>
                <JsonBlock label="Before" value={open.before ?? null} />
              </div>
              <div>
                <h3 className="mb-1 text-xs font-semibold">After</h3>
                <JsonBlock label="After" value={open.after ?? null} />
              </div>
            </div>
          </div>
        )}
      </Dialog>
    </>
  );
}
