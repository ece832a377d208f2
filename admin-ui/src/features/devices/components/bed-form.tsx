import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { bedInputSchema, type Bed, type BedInput } from '@ebbgate/shared';
import { errorMessage } from '@/lib/api-client';
import { Button } from '@/components/ui/button';
import { TextField } from '@/components/ui/field';
import { applyServerErrors } from './server-errors';

export function BedForm({
  bed,
  busy,
  error,
  onSubmit,
  onCancel,
}: {
  bed?: Bed;
  busy: boolean;
  error: unknown;
  onSubmit: (v: BedInput) => void;
  onCancel: () => void;
}) {
  const form = useForm<BedInput>({
    resolver: zodResolver(bedInputSchema),
    defaultValues: { name: bed?.name ?? '', unit: bed?.unit ?? '', locationIdentifier: bed?.locationIdentifier ?? '' },
  });
  useEffect(() => {
    if (error) applyServerErrors(error, form.setError);
  }, [error, form.setError]);
  const e = form.formState.errors;
  return (
    <form noValidate onSubmit={form.handleSubmit(onSubmit)} className="flex flex-col gap-3" aria-label="Bed">
      <TextField label="Bed name" {...form.register('name')} error={e.name?.message} />
      <TextField label="Unit" {...form.register('unit')} error={e.unit?.message} hint="Ward or care unit, e.g. ICU East" />
      <TextField
        label="EHR location identifier"
        {...form.register('locationIdentifier')}
        error={e.locationIdentifier?.message}
        hint="The FHIR Location identifier the EHR knows this bed by"
      />
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
          {bed ? 'Save bed' : 'Add bed'}
        </Button>
      </div>
    </form>
  );
}
