import { useState } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import type { MonitorProfile } from '@ebbgate/shared';
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime } from '@/lib/format';
import { useListState } from '@/hooks/use-list-state';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { ConfirmDialog } from '@/components/ui/dialog';
import { PageHeader } from '@/components/ui/page';
import { useToast } from '@/components/ui/toast';
import { useDeleteProfile, useProfiles } from '../api/devices';

export function ProfilesRoute() {
  const list = useListState({ sort: 'name', order: 'asc' });
  const profiles = useProfiles(list.query);
  const remove = useDeleteProfile();
  const { can } = useAuth();
  const toast = useToast();
  const navigate = useNavigate();
  const [deleting, setDeleting] = useState<MonitorProfile | null>(null);
  const manage = can('manageDevices');

  const columns: Column<MonitorProfile>[] = [
    {
      key: 'name',
      header: 'Profile',
      sortField: 'name',
      render: (p) => (
        <Link className="font-medium text-ink-700 hover:underline" to={`/profiles/${p.id}`}>
          {p.name}
        </Link>
      ),
    },
    { key: 'maker', header: 'Manufacturer · model', sortField: 'manufacturer', render: (p) => `${p.manufacturer} · ${p.model}` },
    {
      key: 'transports',
      header: 'Transports',
      render: (p) => (
        <span className="flex gap-1">
          {p.transports.map((t) => (
            <Badge key={t}>{t}</Badge>
          ))}
        </span>
      ),
    },
    { key: 'channels', header: 'Channels', render: (p) => <span className="text-xs">{p.channels.map((c) => `${c.code}→${c.role}`).join(', ')}</span> },
    { key: 'pleth', header: 'Pleth', render: (p) => <Badge tone={p.plethScaling === 'raw' ? 'neutral' : 'warn'}>{p.plethScaling}</Badge> },
    { key: 'updatedAt', header: 'Updated', sortField: 'updatedAt', render: (p) => <span className="num">{formatDateTime(p.updatedAt)}</span> },
    ...(manage
      ? [
          {
            key: 'actions',
            header: '',
            render: (p: MonitorProfile) => (
              <Button size="sm" variant="ghost" onClick={() => setDeleting(p)}>
                Delete
              </Button>
            ),
          },
        ]
      : []),
  ];

  return (
    <>
      <PageHeader
        title="Monitor profiles"
        description="How each monitor model's channels map to what the engine analyses."
        actions={
          manage ? (
            <Button variant="primary" onClick={() => navigate('/profiles/new')}>
              New profile
            </Button>
          ) : undefined
        }
      />
      <ListFilters list={list} fields={[{ key: 'search', label: 'Search', kind: 'text', width: 'w-72', placeholder: 'name, manufacturer, model' }]} />
      <DataTable
        caption="Monitor profiles"
        columns={columns}
        {...queryTableProps(profiles, list)}
        rowId={(p) => p.id}
        onRowClick={(p) => navigate(`/profiles/${p.id}`)}
        emptyTitle="No monitor profiles yet"
        emptyHint="Create one for each monitor model before mapping monitors."
      />
      <ConfirmDialog
        open={!!deleting}
        title="Delete profile"
        danger
        confirmLabel="Delete"
        message={
          <>
            Delete <strong>{deleting?.name}</strong>? Monitors using it must be moved to another profile first.
          </>
        }
        busy={remove.isPending}
        error={remove.error ? errorMessage(remove.error) : null}
        onClose={() => {
          setDeleting(null);
          remove.reset();
        }}
        onConfirm={() =>
          deleting &&
          remove.mutate(deleting.id, {
            onSuccess: () => {
              toast.success(`Profile ${deleting.name} deleted`);
              setDeleting(null);
            },
          })
        }
      />
    </>
  );
}
