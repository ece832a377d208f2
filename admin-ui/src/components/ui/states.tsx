import type { ReactNode } from 'react';
import { errorMessage } from '@/lib/api-client';
import { Button } from './button';

export function LoadingState({ label = 'Loading…' }: { label?: string }) {
  return (
    <div role="status" className="flex items-center gap-2 px-4 py-8 text-sm text-muted">
      <span aria-hidden className="inline-block h-4 w-4 animate-spin rounded-full border-2 border-ink-500 border-r-transparent" />
      {label}
    </div>
  );
}

export function EmptyState({ title, children }: { title: string; children?: ReactNode }) {
  return (
    <div className="flex flex-col items-center gap-1 px-4 py-10 text-center">
      <svg aria-hidden width="44" height="20" viewBox="0 0 44 20" className="mb-1 text-ink-300">
        <path d="M1 10c5 0 5-7 10-7s5 14 10 14 5-14 10-14 5 7 12 7" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
      </svg>
      <p className="text-sm font-medium text-ink-900">{title}</p>
      {children && <div className="max-w-md text-sm text-muted">{children}</div>}
    </div>
  );
}

export function ErrorState({ error, onRetry }: { error: unknown; onRetry?: () => void }) {
  return (
    <div role="alert" className="m-3 flex items-start gap-3 rounded border border-error/30 bg-error-bg px-3 py-2 text-sm text-error">
      <span className="flex-1">
        <strong className="font-semibold">Could not load.</strong> {errorMessage(error)}
      </span>
      {onRetry && (
        <Button size="sm" onClick={onRetry}>
          Try again
        </Button>
      )}
    </div>
  );
}
