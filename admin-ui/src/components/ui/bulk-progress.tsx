import type { ItemState } from '@/hooks/use-bulk-action';

const LABEL: Record<ItemState['status'], string> = { waiting: 'waiting', running: 'working…', done: 'done', failed: 'failed' };
const TONE: Record<ItemState['status'], string> = { waiting: 'text-muted', running: 'text-ink-700', done: 'text-valid', failed: 'text-error' };

/** Per-item progress and outcome of a bulk action. */
export function BulkProgress({ title, items, label }: { title: string; items: ItemState[]; label?: (id: string) => string }) {
  if (items.length === 0) return null;
  const finished = items.filter((i) => i.status === 'done' || i.status === 'failed').length;
  return (
    <section aria-label={title} className="mb-2 rounded-md border border-line bg-white p-2 text-sm">
      <div className="mb-1 flex items-center gap-3">
        <strong>{title}</strong>
        <progress className="h-2 w-40 accent-ink-700" max={items.length} value={finished} aria-label={`${finished} of ${items.length} finished`} />
        <span className="num text-xs text-muted">
          {finished}/{items.length} · {items.filter((i) => i.status === 'done').length} done · {items.filter((i) => i.status === 'failed').length} failed
        </span>
      </div>
      <ul className="max-h-40 overflow-auto text-xs">
        {items.map((i) => (
          <li key={i.id} data-outcome={i.status} className="flex gap-2 border-t border-line/50 py-0.5">
            <span className="w-48 truncate font-mono">{label ? label(i.id) : i.id}</span>
            <span className={`w-20 ${TONE[i.status]}`}>{LABEL[i.status]}</span>
            <span className="flex-1 text-muted">{i.message}</span>
          </li>
        ))}
      </ul>
    </section>
  );
}
