import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { ApiError } from '@/lib/api-client';

/** Puts the gateway's per-field problem details next to the matching form fields. */
export function applyServerErrors<T extends FieldValues>(err: unknown, setError: UseFormSetError<T>): void {
  if (!(err instanceof ApiError)) return;
  for (const [path, message] of Object.entries(err.fieldErrors())) setError(path as Path<T>, { message });
}
