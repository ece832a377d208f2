import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Navigate, useLocation, useNavigate } from 'react-router-dom';
import { signInSchema, type SignIn } from '@ebbgate/shared';
import { useAuth } from '@/lib/auth';
import { ApiError, errorMessage } from '@/lib/api-client';
import { formatWait } from '@/lib/format';
import { Button } from '@/components/ui/button';
import { TextField } from '@/components/ui/field';
import { BrandMark } from '@/components/ui/brand';

function signInFailure(err: unknown): string {
  if (err instanceof ApiError) {
    if (err.status === 401) return 'User name or password not recognised.';
    // The gateway slows repeated failures down (a growing wait, per account and per address) and
    // says how long in Retry-After; nothing is locked, so the wait is all there is to say.
    if (err.status === 429)
      return err.retryAfterSeconds !== undefined
        ? `Too many attempts. Try again in ${formatWait(err.retryAfterSeconds)}.`
        : 'Too many attempts. Wait a little and try again.';
  }
  return errorMessage(err);
}

export function SignInRoute() {
  const { session, signIn } = useAuth();
  const navigate = useNavigate();
  const location = useLocation();
  const next = new URLSearchParams(location.search).get('next') ?? '/';
  const ended = new URLSearchParams(location.search).has('ended');
  // The shell remembers that the previous session ran out; the address carries it across.
  const form = useForm<SignIn>({ resolver: zodResolver(signInSchema), defaultValues: { username: '', password: '' } });

  if (session) return <Navigate to={next.startsWith('/') ? next : '/'} replace />;

  const onSubmit = form.handleSubmit((values) => signIn.mutate(values, { onSuccess: () => navigate(next.startsWith('/') ? next : '/', { replace: true }) }));

  return (
    <main className="flex min-h-screen items-center justify-center bg-ink-900 px-4">
      <div className="w-full max-w-sm">
        <div className="mb-5 flex items-center gap-2 text-white">
          <BrandMark className="h-8 w-8" />
          <div>
            <p className="text-lg font-semibold leading-tight">Ebbgate</p>
            <p className="text-xs text-ink-300">Respiratory-variation gateway console</p>
          </div>
        </div>
        <form onSubmit={onSubmit} noValidate className="flex flex-col gap-3 rounded-md bg-white p-5 shadow-lg" aria-labelledby="sign-in-title">
          <h1 id="sign-in-title" className="text-base font-semibold">
            Sign in
          </h1>
          {ended && !signIn.error && (
            <p role="status" className="rounded bg-sand-100 px-2 py-1 text-xs text-ink-900">
              Your session ended. Sign in again to continue.
            </p>
          )}
          <TextField label="User name" autoComplete="username" autoFocus {...form.register('username')} error={form.formState.errors.username?.message} />
          <TextField
            label="Password"
            type="password"
            autoComplete="current-password"
            {...form.register('password')}
            error={form.formState.errors.password?.message}
          />
          {signIn.error && (
            <p role="alert" className="rounded border border-error/30 bg-error-bg px-2 py-1 text-sm text-error">
              {signInFailure(signIn.error)}
            </p>
          )}
          <Button type="submit" variant="primary" busy={signIn.isPending} className="justify-center">
            Sign in
          </Button>
          <p className="text-xs text-muted">Decision support for trained clinicians. Access is logged.</p>
        </form>
      </div>
    </main>
  );
}
