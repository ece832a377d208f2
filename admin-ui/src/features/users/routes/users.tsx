import { useState } from 'react';
import type { User } from '@ebbgate/shared';
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime } from '@/lib/format';
import { useListState } from '@/hooks/use-list-state';
import { Badge, StatusBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { ConfirmDialog, Dialog } from '@/components/ui/dialog';
import { PageHeader } from '@/components/ui/page';
import { useToast } from '@/components/ui/toast';
import { useCreateUser, useResetPassword, useUpdateUser, useUsers } from '../api/users';
import { CreateUserForm, ResetPasswordForm, RolesForm } from '../components/user-forms';

type Dialogs = { kind: 'create' } | { kind: 'roles'; user: User } | { kind: 'password'; user: User } | { kind: 'disable'; user: User } | null;

export function UsersRoute() {
  const list = useListState({ sort: 'username', order: 'asc' });
  const users = useUsers(list.query);
  const create = useCreateUser();
  const update = useUpdateUser();
  const reset = useResetPassword();
  const toast = useToast();
  const { session } = useAuth();
  const [dialog, setDialog] = useState<Dialogs>(null);
  const close = () => {
    setDialog(null);
    create.reset();
    update.reset();
    reset.reset();
  };

  const columns: Column<User>[] = [
    { key: 'username', header: 'User name', sortField: 'username', render: (u) => <span className="font-medium">{u.username}</span> },
    { key: 'displayName', header: 'Name', sortField: 'displayName', render: (u) => u.displayName },
    {
      key: 'roles',
      header: 'Roles',
      render: (u) => (
        <span className="flex flex-wrap gap-1">
          {u.roles.map((r) => (
            <Badge key={r} tone="info">
              {r}
            </Badge>
          ))}
        </span>
      ),
    },
    {
      key: 'state',
      header: 'State',
      render: (u) => <StatusBadge status={u.disabled ? 'disabled' : u.lockedUntil && new Date(u.lockedUntil) > new Date() ? 'locked' : 'active'} />,
    },
    { key: 'lastSignInAt', header: 'Last sign-in', sortField: 'lastSignInAt', render: (u) => <span className="num">{formatDateTime(u.lastSignInAt)}</span> },
    { key: 'createdAt', header: 'Created', sortField: 'createdAt', render: (u) => <span className="num">{formatDateTime(u.createdAt)}</span> },
    {
      key: 'actions',
      header: 'Actions',
      render: (u) => (
        <span className="flex gap-1">
          <Button size="sm" onClick={() => setDialog({ kind: 'roles', user: u })}>
            Roles
          </Button>
          <Button size="sm" onClick={() => setDialog({ kind: 'password', user: u })}>
            Reset password
          </Button>
          {u.disabled ? (
            <Button
              size="sm"
              onClick={() =>
                update.mutate(
                  { id: u.id, body: { disabled: false } },
                  { onSuccess: () => toast.success(`${u.username} enabled`), onError: (e) => toast.error(errorMessage(e)) },
                )
              }
            >
              Enable
            </Button>
          ) : (
            <Button
              size="sm"
              variant="danger"
              disabled={u.id === session?.user.id}
              title={u.id === session?.user.id ? 'You cannot disable yourself' : undefined}
              onClick={() => setDialog({ kind: 'disable', user: u })}
            >
              Disable
            </Button>
          )}
        </span>
      ),
    },
  ];

  return (
    <>
      <PageHeader
        title="Users & roles"
        description="People who may use the console, and what each may do."
        actions={
          <Button variant="primary" onClick={() => setDialog({ kind: 'create' })}>
            New user
          </Button>
        }
      />
      <ListFilters list={list} fields={[{ key: 'search', label: 'Search', kind: 'text', width: 'w-64', placeholder: 'user name or name' }]} />
      <DataTable
        caption="Users"
        columns={columns}
        {...queryTableProps(users, list)}
        rowId={(u) => u.id}
        emptyTitle="No users match"
        emptyHint="Clear the search, or create a user."
      />

      <Dialog open={dialog?.kind === 'create'} title="New user" onClose={close}>
        <CreateUserForm
          busy={create.isPending}
          error={create.error}
          onCancel={close}
          onSubmit={(v) =>
            create.mutate(v, {
              onSuccess: (u) => {
                toast.success(`User ${u.username} created`);
                close();
              },
            })
          }
        />
      </Dialog>
      {dialog?.kind === 'roles' && (
        <Dialog open title="Change roles" onClose={close}>
          <RolesForm
            user={dialog.user}
            busy={update.isPending}
            error={update.error}
            onCancel={close}
            onSubmit={(roles) =>
              update.mutate(
                { id: dialog.user.id, body: { roles } },
                {
                  onSuccess: () => {
                    toast.success(`Roles of ${dialog.user.username} saved`);
                    close();
                  },
                },
              )
            }
          />
        </Dialog>
      )}
      {dialog?.kind === 'password' && (
        <Dialog open title="Reset password" onClose={close}>
          <ResetPasswordForm
            user={dialog.user}
            busy={reset.isPending}
            error={reset.error}
            onCancel={close}
            onSubmit={(password) =>
              reset.mutate(
                { id: dialog.user.id, password },
                {
                  onSuccess: () => {
                    toast.success(`Password of ${dialog.user.username} reset`);
                    close();
                  },
                },
              )
            }
          />
        </Dialog>
      )}
      <ConfirmDialog
        open={dialog?.kind === 'disable'}
        title="Disable user"
        danger
        confirmLabel="Disable"
        message={
          dialog?.kind === 'disable' ? (
            <>
              Disable <strong>{dialog.user.username}</strong>? They are signed out and can no longer sign in. Their audit history stays.
            </>
          ) : null
        }
        busy={update.isPending}
        error={update.error ? errorMessage(update.error) : null}
        onClose={close}
        onConfirm={() =>
          dialog?.kind === 'disable' &&
          update.mutate(
            { id: dialog.user.id, body: { disabled: true } },
            {
              onSuccess: () => {
                toast.success(`${dialog.user.username} disabled`);
                close();
              },
            },
          )
        }
      />
    </>
  );
}
