import { useEffect } from 'react';
import { useFieldArray, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { indexNameSchema, siteSettingsSchema, type SiteSettings } from '@ebbgate/shared';
import { ApiError, errorMessage } from '@/lib/api-client';
import { Button } from '@/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@/components/ui/field';

/** The form edits recipients as one text box; everything else is the shared schema as is. */
const formSchema = siteSettingsSchema.extend({
  alerts: siteSettingsSchema.shape.alerts.omit({ recipients: true }).extend({ recipientsText: z.string() }),
});
type FormValues = z.input<typeof formSchema>;

const toNumber = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : Number(v));
const toNullableNumber = (v: unknown) => (v === '' || v === null || v === undefined ? null : Number(v));
const splitRecipients = (t: string) =>
  t
    .split(/[\s,;]+/)
    .map((x) => x.trim())
    .filter(Boolean);

function toForm(s: SiteSettings): FormValues {
  const { recipients, ...alerts } = s.alerts;
  return { ...s, alerts: { ...alerts, recipientsText: recipients.join('\n') } };
}

export function SettingsForm({
  settings,
  readOnly,
  busy,
  error,
  onSubmit,
}: {
  settings: SiteSettings;
  readOnly: boolean;
  busy: boolean;
  error: unknown;
  onSubmit: (s: SiteSettings) => void;
}) {
  const form = useForm<FormValues>({ resolver: zodResolver(formSchema), defaultValues: toForm(settings) });
  const bands = useFieldArray({ control: form.control, name: 'analysis.bands' });
  const e = form.formState.errors;
  useEffect(() => {
    form.reset(toForm(settings));
  }, [settings, form]);
  useEffect(() => {
    if (error instanceof ApiError) for (const [path, message] of Object.entries(error.fieldErrors())) form.setError(path as never, { message });
  }, [error, form]);

  const submit = form.handleSubmit((v) => {
    const recipients = splitRecipients(v.alerts.recipientsText);
    const candidate = { ...v, alerts: { destinationDownMinutes: v.alerts.destinationDownMinutes, failureThreshold: v.alerts.failureThreshold, recipients } };
    const parsed = siteSettingsSchema.safeParse(candidate);
    if (!parsed.success) {
      const bad = parsed.error.issues.find((i) => i.path[0] === 'alerts' && i.path[1] === 'recipients');
      if (bad) {
        form.setError('alerts.recipientsText', { message: `not an e-mail address: ${recipients[Number(bad.path[2])] ?? ''}` });
        return;
      }
      form.setError('root', { message: parsed.error.issues[0]?.message ?? 'invalid settings' });
      return;
    }
    onSubmit(parsed.data);
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-5" aria-label="Site settings">
      <fieldset disabled={readOnly} className="flex flex-col gap-5">
        <section className="flex flex-col gap-2" aria-label="Analysis">
          <h2 className="text-sm font-semibold">Analysis</h2>
          <div className="flex gap-3">
            <TextField
              label="Cycles averaged per window"
              inputMode="numeric"
              wrapClassName="w-52"
              {...form.register('analysis.cyclesToAverage', { setValueAs: toNumber })}
              error={e.analysis?.cyclesToAverage?.message}
              hint="Common practice: 3 consecutive cycles"
            />
            <TextField
              label="Window length (s)"
              inputMode="numeric"
              wrapClassName="w-40"
              {...form.register('analysis.windowSeconds', { setValueAs: toNumber })}
              error={e.analysis?.windowSeconds?.message}
            />
          </div>
          <h3 className="mt-2 text-xs font-semibold uppercase tracking-wide text-muted">Decision bands</h3>
          <p className="text-xs text-muted">
            Shown beside the values as context with their source, never as an order to give fluid. Lower bound inclusive, upper exclusive; leave empty for
            open-ended.
          </p>
          <div className="overflow-x-auto rounded border border-line">
            <table className="w-full text-sm">
              <thead className="bg-ink-50 text-left text-xs">
                <tr>
                  <th className="px-2 py-1">Id</th>
                  <th className="px-2">Index</th>
                  <th className="px-2">Lower</th>
                  <th className="px-2">Upper</th>
                  <th className="px-2">Unit</th>
                  <th className="px-2">Label</th>
                  <th className="px-2">Source</th>
                  <th />
                </tr>
              </thead>
              <tbody>
                {bands.fields.map((f, i) => {
                  const be = e.analysis?.bands?.[i];
                  return (
                    <tr key={f.id} className="border-t border-line/70 align-top" data-testid="band-row">
                      <td className="px-1 py-1">
                        <TextField
                          label={`Band ${i + 1} id`}
                          wrapClassName="[&>label]:sr-only w-36"
                          {...form.register(`analysis.bands.${i}.id`)}
                          error={be?.id?.message}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <SelectField
                          label={`Band ${i + 1} index`}
                          wrapClassName="[&>label]:sr-only w-32"
                          options={indexNameSchema.options.map((o) => ({ value: o, label: o }))}
                          {...form.register(`analysis.bands.${i}.index`)}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <TextField
                          label={`Band ${i + 1} lower`}
                          inputMode="decimal"
                          wrapClassName="[&>label]:sr-only w-16"
                          {...form.register(`analysis.bands.${i}.lower`, { setValueAs: toNullableNumber })}
                          error={be?.lower?.message}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <TextField
                          label={`Band ${i + 1} upper`}
                          inputMode="decimal"
                          wrapClassName="[&>label]:sr-only w-16"
                          {...form.register(`analysis.bands.${i}.upper`, { setValueAs: toNullableNumber })}
                          error={be?.upper?.message}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <TextField
                          label={`Band ${i + 1} unit`}
                          wrapClassName="[&>label]:sr-only w-14"
                          {...form.register(`analysis.bands.${i}.unit`)}
                          error={be?.unit?.message}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <TextField
                          label={`Band ${i + 1} label`}
                          wrapClassName="[&>label]:sr-only w-52"
                          {...form.register(`analysis.bands.${i}.label`)}
                          error={be?.label?.message}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <TextField
                          label={`Band ${i + 1} source`}
                          wrapClassName="[&>label]:sr-only w-72"
                          {...form.register(`analysis.bands.${i}.source`)}
                          error={be?.source?.message}
                        />
                      </td>
                      <td className="px-1 py-1">
                        <Button size="sm" variant="ghost" aria-label={`Remove band ${i + 1}`} onClick={() => bands.remove(i)}>
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
            <Button size="sm" onClick={() => bands.append({ id: '', index: 'ppv', lower: null, upper: null, unit: '%', label: '', source: '' })}>
              Add band
            </Button>
          </div>
        </section>

        <section className="flex flex-col gap-2" aria-label="Delivery to the EHR">
          <h2 className="text-sm font-semibold">Delivery to the EHR</h2>
          <div className="flex gap-3">
            <SelectField
              label="Observation status"
              wrapClassName="w-56"
              {...form.register('delivery.observationStatus')}
              options={[
                { value: 'preliminary', label: 'preliminary' },
                { value: 'final', label: 'final' },
              ]}
            />
            <SelectField
              label="Not-valid results"
              wrapClassName="w-72"
              {...form.register('delivery.notValidPolicy')}
              options={[
                { value: 'withhold', label: 'Withhold (not sent)' },
                { value: 'data-absent', label: 'Send with a data-absent reason' },
              ]}
            />
          </div>
        </section>

        <section className="flex flex-col gap-2" aria-label="Alerts">
          <h2 className="text-sm font-semibold">Alerts</h2>
          <div className="flex flex-wrap gap-3">
            <TextAreaField
              label="Alert recipients"
              rows={3}
              wrapClassName="w-80"
              placeholder="one e-mail address per line"
              {...form.register('alerts.recipientsText')}
              error={e.alerts?.recipientsText?.message}
            />
            <TextField
              label="Destination down for (min)"
              inputMode="numeric"
              wrapClassName="w-52"
              {...form.register('alerts.destinationDownMinutes', { setValueAs: toNumber })}
              error={e.alerts?.destinationDownMinutes?.message}
            />
            <TextField
              label="Failures in an hour"
              inputMode="numeric"
              wrapClassName="w-44"
              {...form.register('alerts.failureThreshold', { setValueAs: toNumber })}
              error={e.alerts?.failureThreshold?.message}
            />
          </div>
        </section>
      </fieldset>
      {e.root?.message && (
        <p role="alert" className="text-sm text-error">
          {e.root.message}
        </p>
      )}
      {error !== null && error !== undefined && (
        <p role="alert" className="text-sm text-error">
          {errorMessage(error)}
        </p>
      )}
      {!readOnly && (
        <div className="flex justify-end gap-2">
          <Button onClick={() => form.reset(toForm(settings))} disabled={busy}>
            Undo changes
          </Button>
          <Button type="submit" variant="primary" busy={busy}>
            Save settings
          </Button>
        </div>
      )}
    </form>
  );
}
