import { useEffect } from 'react';
import { Controller, useFieldArray, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { CHANNEL_ROLES, monitorProfileInputSchema, probeSiteSchema, type MonitorProfile } from '@ebbgate/shared';
import { errorMessage } from '@/lib/api-client';
import { Button } from '@/components/ui/button';
import { CheckboxGroup, SelectField, TextAreaField, TextField } from '@/components/ui/field';
import { applyServerErrors } from './server-errors';

type In = z.input<typeof monitorProfileInputSchema>;
type Out = z.output<typeof monitorProfileInputSchema>;

const ROLE_LABEL: Record<string, string> = {
  abp: 'abp — arterial pressure',
  pleth: 'pleth — plethysmogram',
  paw: 'paw — airway pressure',
  co2: 'co2 — capnogram',
};
const toNumber = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : Number(v));
const emptyChannel: In['channels'][number] = { code: '', label: '', role: 'abp', unit: 'mmHg', gain: 1, offset: 0, sampleRate: 125, builtInFiltering: '' };

function toInput(p?: MonitorProfile): In {
  if (!p)
    return {
      name: '',
      manufacturer: '',
      model: '',
      transports: ['http'],
      channels: [{ ...emptyChannel }],
      defaultProbeSite: null,
      plethScaling: 'raw',
      notes: '',
    };
  return { ...p, notes: p.notes ?? '', channels: p.channels.map((c) => ({ ...c, label: c.label ?? '', builtInFiltering: c.builtInFiltering ?? '' })) };
}

/** Drops empty optional strings so the shared schema sees "absent", not "". */
function clean(v: Out): Out {
  return {
    ...v,
    notes: v.notes ? v.notes : null,
    channels: v.channels.map((c) => ({ ...c, label: c.label || undefined, builtInFiltering: c.builtInFiltering || undefined })),
  };
}

export function ProfileForm({
  profile,
  busy,
  error,
  onSubmit,
  onCancel,
}: {
  profile?: MonitorProfile;
  busy: boolean;
  error: unknown;
  onSubmit: (v: Out) => void;
  onCancel: () => void;
}) {
  const form = useForm<In, unknown, Out>({ resolver: zodResolver(monitorProfileInputSchema), defaultValues: toInput(profile) });
  const channels = useFieldArray({ control: form.control, name: 'channels' });
  const e = form.formState.errors;
  useEffect(() => {
    if (error) applyServerErrors(error, form.setError);
  }, [error, form.setError]);
  const channelsError = e.channels?.message ?? e.channels?.root?.message;

  return (
    <form noValidate onSubmit={form.handleSubmit((v) => onSubmit(clean(v)))} className="flex flex-col gap-4" aria-label="Monitor profile">
      <div className="grid grid-cols-3 gap-3">
        <TextField label="Profile name" {...form.register('name')} error={e.name?.message} />
        <TextField label="Manufacturer" {...form.register('manufacturer')} error={e.manufacturer?.message} />
        <TextField label="Model" {...form.register('model')} error={e.model?.message} />
      </div>
      <div className="grid grid-cols-3 gap-3">
        <Controller
          control={form.control}
          name="transports"
          render={({ field }) => (
            <CheckboxGroup
              legend="Transports"
              value={field.value}
              onChange={field.onChange}
              error={e.transports?.message}
              options={[
                { value: 'http', label: 'HTTP JSON batches' },
                { value: 'mllp', label: 'HL7 v2 over MLLP' },
              ]}
            />
          )}
        />
        <SelectField
          label="Pleth output"
          {...form.register('plethScaling')}
          error={e.plethScaling?.message}
          options={[
            { value: 'raw', label: 'Raw (keeps its DC level)' },
            { value: 'auto-scaled', label: 'Auto-scaled by the monitor (no PI)' },
          ]}
          hint="An auto-scaled pleth loses its DC level, so no perfusion index is computed from it."
        />
        <SelectField
          label="Default probe site"
          placeholder="not set"
          {...form.register('defaultProbeSite', { setValueAs: (v) => (v === '' ? null : v) })}
          error={e.defaultProbeSite?.message}
          options={probeSiteSchema.options.map((s) => ({ value: s, label: s }))}
        />
      </div>

      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-sm font-semibold">Channel mapping</legend>
        <p className="text-xs text-muted">
          Each code the monitor sends (IEEE 11073 MDC code or its own label) maps to a role. Physical value = gain × raw + offset.
        </p>
        {channelsError && (
          <p role="alert" className="text-xs text-error">
            {channelsError}
          </p>
        )}
        <div className="overflow-x-auto rounded border border-line">
          <table className="w-full text-sm">
            <thead className="bg-ink-50 text-left text-xs text-ink-800">
              <tr>
                <th className="px-2 py-1">Code</th>
                <th className="px-2">Label</th>
                <th className="px-2">Role</th>
                <th className="px-2">Unit</th>
                <th className="px-2">Gain</th>
                <th className="px-2">Offset</th>
                <th className="px-2">Rate (Hz)</th>
                <th className="px-2">Monitor’s own filtering</th>
                <th />
              </tr>
            </thead>
            <tbody>
              {channels.fields.map((f, i) => {
                const ce = e.channels?.[i];
                return (
                  <tr key={f.id} className="border-t border-line/70 align-top" data-testid="channel-row">
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} code`}
                        className="font-mono"
                        {...form.register(`channels.${i}.code`)}
                        error={ce?.code?.message}
                        wrapClassName="[&>label]:sr-only w-40"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} label`}
                        {...form.register(`channels.${i}.label`)}
                        error={ce?.label?.message}
                        wrapClassName="[&>label]:sr-only w-32"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <SelectField
                        label={`Channel ${i + 1} role`}
                        {...form.register(`channels.${i}.role`)}
                        error={ce?.role?.message}
                        options={CHANNEL_ROLES.map((r) => ({ value: r, label: ROLE_LABEL[r] ?? r }))}
                        wrapClassName="[&>label]:sr-only w-44"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} unit`}
                        {...form.register(`channels.${i}.unit`)}
                        error={ce?.unit?.message}
                        wrapClassName="[&>label]:sr-only w-20"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} gain`}
                        inputMode="decimal"
                        {...form.register(`channels.${i}.gain`, { setValueAs: toNumber })}
                        error={ce?.gain?.message}
                        wrapClassName="[&>label]:sr-only w-20"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} offset`}
                        inputMode="decimal"
                        {...form.register(`channels.${i}.offset`, { setValueAs: toNumber })}
                        error={ce?.offset?.message}
                        wrapClassName="[&>label]:sr-only w-20"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} sample rate`}
                        inputMode="decimal"
                        {...form.register(`channels.${i}.sampleRate`, { setValueAs: toNumber })}
                        error={ce?.sampleRate?.message}
                        wrapClassName="[&>label]:sr-only w-20"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <TextField
                        label={`Channel ${i + 1} built-in filtering`}
                        placeholder="e.g. 0.5–10 Hz band-pass"
                        {...form.register(`channels.${i}.builtInFiltering`)}
                        error={ce?.builtInFiltering?.message}
                        wrapClassName="[&>label]:sr-only w-48"
                      />
                    </td>
                    <td className="px-1 py-1">
                      <Button
                        size="sm"
                        variant="ghost"
                        aria-label={`Remove channel ${i + 1}`}
                        disabled={channels.fields.length <= 1}
                        onClick={() => channels.remove(i)}
                      >
                        Remove
                      </Button>
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
        <div>
          <Button size="sm" onClick={() => channels.append({ ...emptyChannel, role: 'pleth', unit: '1' })} disabled={channels.fields.length >= 16}>
            Add channel
          </Button>
        </div>
      </fieldset>

      <TextAreaField label="Notes" rows={2} {...form.register('notes')} error={e.notes?.message} />
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
          {profile ? 'Save profile' : 'Create profile'}
        </Button>
      </div>
    </form>
  );
}
