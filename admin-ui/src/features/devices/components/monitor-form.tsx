import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { createMonitorSchema, type Monitor } from '@ebbgate/shared';
import { errorMessage } from '@/lib/api-client';
import { Button } from '@/components/ui/button';
import { SelectField, TextField } from '@/components/ui/field';
import { useBedOptions, useProfileOptions } from '../api/devices';
import { applyServerErrors } from './server-errors';

type In = z.input<typeof createMonitorSchema>;
type Out = z.output<typeof createMonitorSchema>;
const nullIfEmpty = (v: unknown) => (v === '' ? null : v);

export function MonitorForm({
  monitor,
  busy,
  error,
  onSubmit,
  onCancel,
}: {
  monitor?: Monitor;
  busy: boolean;
  error: unknown;
  onSubmit: (v: Out) => void;
  onCancel: () => void;
}) {
  const profiles = useProfileOptions();
  const beds = useBedOptions();
  const form = useForm<In, unknown, Out>({
    resolver: zodResolver(createMonitorSchema),
    defaultValues: {
      identifier: monitor?.identifier ?? '',
      profileId: monitor?.profileId ?? null,
      bedId: monitor?.bedId ?? null,
      enabled: monitor?.enabled ?? true,
    },
  });
  useEffect(() => {
    if (error) applyServerErrors(error, form.setError);
  }, [error, form.setError]);
  const e = form.formState.errors;
  return (
    <form noValidate onSubmit={form.handleSubmit(onSubmit)} className="flex flex-col gap-3" aria-label="Monitor">
      <TextField
        label="Identifier"
        className="font-mono"
        {...form.register('identifier')}
        error={e.identifier?.message}
        hint="EUI-64 (16 hex digits) or serial number, as the monitor sends it"
      />
      <SelectField
        label="Profile"
        placeholder="none yet"
        {...form.register('profileId', { setValueAs: nullIfEmpty })}
        error={e.profileId?.message}
        options={(profiles.data?.items ?? []).map((p) => ({ value: p.id, label: `${p.name} — ${p.manufacturer} ${p.model}` }))}
      />
      <SelectField
        label="Bed"
        placeholder="not assigned"
        {...form.register('bedId', { setValueAs: nullIfEmpty })}
        error={e.bedId?.message}
        options={(beds.data?.items ?? []).map((b) => ({
          value: b.id,
          label: `${b.name} · ${b.unit}${b.monitorId && b.monitorId !== monitor?.id ? ' (has a monitor)' : ''}`,
        }))}
      />
      <label className="inline-flex items-center gap-2 text-sm">
        <input type="checkbox" className="accent-ink-700" {...form.register('enabled')} /> Accept data from this monitor
      </label>
      {error !== null && error !== undefined && (
        <p role="alert" className="text-sm text-error">
          {errorMessage(error)}
        </p>
      )}
      <div className="flex justify-end gap-2">
        <Button onClick={onCancel} disabled={busy}>
          Cancel
        </Button>
        <Button type="submit" variant="primary" busy={busy}>
          {monitor ? 'Save monitor' : 'Add monitor'}
        </Button>
      </div>
    </form>
  );
}
