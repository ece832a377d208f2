import { useEffect } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { createUserSchema, resetPasswordSchema, ROLES, roleSchema, type CreateUser, type Role, type User } from '@ebbgate/shared';
import { ApiError, errorMessage } from '@/lib/api-client';
import { Button } from '@/components/ui/button';
import { CheckboxGroup, TextField } from '@/components/ui/field';

const roleOptions = ROLES.map((r) => ({ value: r, label: r }));

/** Copies server-side field errors (problem details `errors[]`) onto the form fields. */
function applyServerErrors(err: unknown, setError: (name: never, e: { message: string }) => void) {
  if (err instanceof ApiError) for (const [path, message] of Object.entries(err.fieldErrors())) setError(path as never, { message });
}

export function CreateUserForm({
  busy,
  error,
  onSubmit,
  onCancel,
}: {
  busy: boolean;
  error: unknown;
  onSubmit: (v: CreateUser) => void;
  onCancel: () => void;
}) {
  const form = useForm<CreateUser>({ resolver: zodResolver(createUserSchema), defaultValues: { username: '', displayName: '', password: '', roles: [] } });
  useEffect(() => {
    if (error) applyServerErrors(error, form.setError as never);
  }, [error, form.setError]);
  const e = form.formState.errors;
  return (
    <form noValidate onSubmit={form.handleSubmit(onSubmit)} className="flex flex-col gap-3" aria-label="New user">
      <TextField
        label="User name"
        autoComplete="off"
        {...form.register('username')}
        error={e.username?.message}
        hint="lower-case letters, digits, dot, dash, underscore"
      />
      <TextField label="Display name" {...form.register('displayName')} error={e.displayName?.message} />
      <TextField
        label="Initial password"
        type="password"
        autoComplete="new-password"
        {...form.register('password')}
        error={e.password?.message}
        hint="12 or more characters, letters mixed with digits or symbols"
      />
      <Controller
        control={form.control}
        name="roles"
        render={({ field }) => <CheckboxGroup legend="Roles" options={roleOptions} value={field.value} onChange={field.onChange} error={e.roles?.message} />}
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
          Create user
        </Button>
      </div>
    </form>
  );
}

const rolesFormSchema = z.object({ roles: z.array(roleSchema).min(1, 'choose at least one role') });

export function RolesForm({
  user,
  busy,
  error,
  onSubmit,
  onCancel,
}: {
  user: User;
  busy: boolean;
  error: unknown;
  onSubmit: (roles: Role[]) => void;
  onCancel: () => void;
}) {
  const form = useForm<{ roles: Role[] }>({ resolver: zodResolver(rolesFormSchema), defaultValues: { roles: user.roles } });
  return (
    <form noValidate onSubmit={form.handleSubmit((v) => onSubmit(v.roles))} className="flex flex-col gap-3" aria-label={`Roles of ${user.username}`}>
      <Controller
        control={form.control}
        name="roles"
        render={({ field }) => (
          <CheckboxGroup
            legend={`Roles of ${user.displayName}`}
            options={roleOptions}
            value={field.value}
            onChange={field.onChange}
            error={form.formState.errors.roles?.message}
          />
        )}
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
          Save roles
        </Button>
      </div>
    </form>
  );
}

const resetFormSchema = resetPasswordSchema
  .extend({ confirm: z.string() })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'the two entries differ' });

export function ResetPasswordForm({
  user,
  busy,
  error,
  onSubmit,
  onCancel,
}: {
  user: User;
  busy: boolean;
  error: unknown;
  onSubmit: (password: string) => void;
  onCancel: () => void;
}) {
  const form = useForm<{ password: string; confirm: string }>({ resolver: zodResolver(resetFormSchema), defaultValues: { password: '', confirm: '' } });
  useEffect(() => {
    if (error) applyServerErrors(error, form.setError as never);
  }, [error, form.setError]);
  const e = form.formState.errors;
  return (
    <form noValidate onSubmit={form.handleSubmit((v) => onSubmit(v.password))} className="flex flex-col gap-3" aria-label={`New password for ${user.username}`}>
      <p className="text-sm text-muted">
        Sets a new password for <strong>{user.displayName}</strong>. Tell them through a channel you trust.
      </p>
      <TextField label="New password" type="password" autoComplete="new-password" {...form.register('password')} error={e.password?.message} />
      <TextField label="Repeat new password" type="password" autoComplete="new-password" {...form.register('confirm')} error={e.confirm?.message} />
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
          Set password
        </Button>
      </div>
    </form>
  );
}
