import { useEffect, useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { newEdgeCredentialSchema, type EdgeCredential, type EdgeCredentialKind, type EdgeCredentialScope } from '@ebbgate/shared';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime } from '@/lib/format';
import { Button } from '@/components/ui/button';
import { ConfirmDialog } from '@/components/ui/dialog';
import { SelectField, TextField } from '@/components/ui/field';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { useAddEdgeCredential, useEdgeCredentials, useRemoveEdgeCredential } from '../api/edge-credentials';
import { applyServerErrors } from './server-errors';

export const EDGE_KIND_TEXT: Record<EdgeCredentialKind, string> = {
  'certificate-fingerprint': 'Client certificate (SHA-256 fingerprint)',
  'certificate-subject': 'Client certificate (subject or common name)',
  source: 'Allowed source address or CIDR',
};
const VALUE_HINT: Record<EdgeCredentialKind, string> = {
  'certificate-fingerprint': '64 hex digits, colons allowed',
  'certificate-subject': 'e.g. CN=bay-07.icu.harrowmere.example,O=Harrowmere General',
  source: 'IPv4 or IPv6 address, or a range such as 10.20.0.0/24',
};
const KINDS = Object.keys(EDGE_KIND_TEXT) as EdgeCredentialKind[];

type In = z.input<typeof newEdgeCredentialSchema>;
type Out = z.output<typeof newEdgeCredentialSchema>;
const undefinedIfEmpty = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);

function AddEdgeCredentialForm({ scope, id }: { scope: EdgeCredentialScope; id: string }) {
  const add = useAddEdgeCredential(scope, id);
  const toast = useToast();
  const form = useForm<In, unknown, Out>({
    resolver: zodResolver(newEdgeCredentialSchema),
    defaultValues: { kind: 'certificate-fingerprint', value: '', note: undefined },
  });
  useEffect(() => {
    if (add.error) applyServerErrors(add.error, form.setError);
  }, [add.error, form.setError]);
  const kind = useWatch({ control: form.control, name: 'kind' });
  const e = form.formState.errors;
  const submit = (v: Out) =>
    add.mutate(v, {
      onSuccess: () => {
        toast.success(`${EDGE_KIND_TEXT[v.kind]} added`);
        form.reset({ kind: v.kind, value: '', note: undefined });
      },
    });
  return (
    <form noValidate onSubmit={form.handleSubmit(submit)} className="flex flex-col gap-2" aria-label="Add device edge credential">
      <div className="grid gap-2 sm:grid-cols-[16rem_1fr]">
        <SelectField label="Kind" {...form.register('kind')} error={e.kind?.message} options={KINDS.map((k) => ({ value: k, label: EDGE_KIND_TEXT[k] }))} />
        <TextField label="Value" className="font-mono" {...form.register('value')} error={e.value?.message} hint={VALUE_HINT[kind]} />
      </div>
      <TextField
        label="Note (optional)"
        {...form.register('note', { setValueAs: undefinedIfEmpty })}
        error={e.note?.message}
        hint="Where this comes from, e.g. the adapter host"
      />
      {add.error !== null && (
        <p role="alert" className="text-sm text-error">
          {errorMessage(add.error)}
        </p>
      )}
      <div className="flex justify-end">
        <Button type="submit" variant="primary" busy={add.isPending}>
          Add credential
        </Button>
      </div>
    </form>
  );
}

/**
 * What the device edge accepts as proof of who is sending for this monitor (or every monitor of
 * this profile): client certificates for MLLP over TLS, source addresses for plain MLLP.
 */
export function EdgeCredentialsSection({ scope, id }: { scope: EdgeCredentialScope; id: string }) {
  const list = useEdgeCredentials(scope, id);
  const remove = useRemoveEdgeCredential(scope, id);
  const toast = useToast();
  const [removing, setRemoving] = useState<EdgeCredential | null>(null);
  const close = () => {
    setRemoving(null);
    remove.reset();
  };
  return (
    <div className="flex flex-col gap-3" data-testid="device-edge">
      <p className="text-sm text-muted">
        {scope === 'profile' ? 'Credentials here count for every monitor of this profile. ' : ''}A monitor with a client certificate registered refuses plain
        MLLP: it must send over MLLP with TLS.
      </p>
      {list.isPending && <LoadingState label="Loading credentials…" />}
      {list.error && <ErrorState error={list.error} onRetry={() => list.refetch()} />}
      {list.data && list.data.length === 0 && (
        <EmptyState title="No device edge credentials registered here">
          {scope === 'monitor' ? "Those of the monitor's profile still apply. " : ''}Without any, plain MLLP is allowed only from the source addresses in the
          gateway configuration.
        </EmptyState>
      )}
      {list.data && list.data.length > 0 && (
        <ul className="divide-y divide-line rounded border border-line" aria-label="Registered credentials">
          {list.data.map((c) => (
            <li key={c.id} className="flex flex-wrap items-center justify-between gap-2 px-2 py-1.5 text-sm" data-testid="edge-credential">
              <div className="min-w-0">
                <p className="text-xs font-medium text-ink-800">{EDGE_KIND_TEXT[c.kind]}</p>
                <p className="break-all font-mono text-xs">{c.value}</p>
                <p className="text-xs text-muted">
                  {c.note ? `${c.note} · ` : ''}added {formatDateTime(c.createdAt)}
                  {c.createdBy ? ` by ${c.createdBy}` : ''}
                </p>
              </div>
              <Button size="sm" variant="ghost" onClick={() => setRemoving(c)} aria-label={`Remove ${c.value}`}>
                Remove
              </Button>
            </li>
          ))}
        </ul>
      )}
      <AddEdgeCredentialForm scope={scope} id={id} />
      <ConfirmDialog
        open={!!removing}
        title="Remove credential"
        confirmLabel="Remove"
        danger
        message={
          <>
            The device edge stops accepting <strong className="break-all">{removing?.value}</strong> for this {scope} at once.
          </>
        }
        busy={remove.isPending}
        error={remove.error ? errorMessage(remove.error) : null}
        onClose={close}
        onConfirm={() =>
          removing &&
          remove.mutate(removing.id, {
            onSuccess: () => {
              toast.success('Credential removed');
              close();
            },
          })
        }
      />
    </div>
  );
}
