import type { ReactNode } from 'react';

export function PageHeader({ title, description, actions }: { title: string; description?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-3 flex flex-wrap items-end justify-between gap-3">
      <div>
        <h1 className="text-lg font-semibold text-ink-950">{title}</h1>
        {description && <p className="text-sm text-muted">{description}</p>}
      </div>
      {actions && <div className="flex items-center gap-2">{actions}</div>}
    </div>
  );
}

export function Panel({ title, children, actions, className = '' }: { title?: string; children: ReactNode; actions?: ReactNode; className?: string }) {
  return (
    <section className={`rounded-md border border-line bg-white ${className}`} aria-label={title}>
      {title && (
        <div className="flex items-center justify-between border-b border-line px-3 py-1.5">
          <h2 className="text-sm font-semibold text-ink-900">{title}</h2>
          {actions}
        </div>
      )}
      <div className="p-3">{children}</div>
    </section>
  );
}

/** Filters above a table; submit-free, every change refetches page 1. */
export function FilterBar({ children, onClear }: { children: ReactNode; onClear?: () => void }) {
  return (
    <div role="search" className="mb-2 flex flex-wrap items-end gap-2 rounded-md border border-line bg-white px-2 py-2">
      {children}
      {onClear && (
        <button type="button" className="ml-auto self-end px-2 py-1 text-xs text-ink-700 underline" onClick={onClear}>
          Clear filters
        </button>
      )}
    </div>
  );
}

/** Label/value list for detail screens. */
export function DefinitionList({ items }: { items: [string, ReactNode][] }) {
  return (
    <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1 text-sm">
      {items.map(([k, v]) => (
        <div key={k} className="contents">
          <dt className="text-muted">{k}</dt>
          <dd className="min-w-0 break-words">{v}</dd>
        </div>
      ))}
    </dl>
  );
}

export function JsonBlock({ value, label }: { value: unknown; label: string }) {
  return (
    <pre aria-label={label} tabIndex={0} className="max-h-96 overflow-auto rounded border border-line bg-paper p-2 font-mono text-xs leading-relaxed">
      {typeof value === 'string' ? value : JSON.stringify(value, null, 2)}
    </pre>
  );
}
