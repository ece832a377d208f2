import { useState } from 'react';
import type { AuditEntry } from '@ebbgate/shared';
import { formatDateTime } from '@/lib/format';
import { useListState } from '@/hooks/use-list-state';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { Dialog } from '@/components/ui/dialog';
import { JsonBlock, PageHeader, DefinitionList } from '@/components/ui/page';
import { useAuditEntries } from '../api/audit';

const ENTITY_TYPES = ['user', 'monitor', 'monitor-profile', 'bed', 'assessment', 'delivery', 'destination', 'inbound-message', 'settings'];

export function AuditRoute() {
  const list = useListState({ sort: 'at', order: 'desc' });
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

  return (
    <>
      <PageHeader title="Audit log" description="Every change and every sign-in, with who did it and what it was before and after." />
      <ListFilters
        list={list}
        timeRange
        fields={[
          { key: 'actor', label: 'Who', kind: 'text', width: 'w-40', placeholder: 'user name' },
          { key: 'action', label: 'Action', kind: 'text', width: 'w-44', placeholder: 'e.g. user.create' },
          { key: 'entityType', label: 'On', kind: 'select', width: 'w-40', options: ENTITY_TYPES.map((t) => ({ value: t, label: t })) },
          { key: 'entityId', label: 'Entity id', kind: 'text', width: 'w-40' },
        ]}
      />
      <DataTable
        caption="Audit entries"
        columns={columns}
        {...queryTableProps(entries, list)}
        rowId={(a) => a.id}
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
