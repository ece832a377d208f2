import { CAUTIONS } from '@/lib/analysis';

/** The cautions from the handbook, shown wherever an index value is shown. */
export function Cautions({ cautions, compact }: { cautions?: readonly string[]; compact?: boolean }) {
  const list = cautions && cautions.length > 0 ? cautions : CAUTIONS;
  return (
    <aside
      aria-label="Cautions"
      data-testid="cautions"
      className={`rounded-md border border-sand-300 bg-sand-100/70 text-ink-900 ${compact ? 'px-3 py-1.5 text-xs' : 'px-3 py-2 text-xs'}`}
    >
      <p className="mb-0.5 font-semibold">Cautions</p>
      <ul className={compact ? 'grid list-disc gap-x-8 gap-y-0.5 pl-4 md:grid-cols-2' : 'list-disc space-y-0.5 pl-4'}>
        {list.map((c) => (
          <li key={c}>{c}</li>
        ))}
      </ul>
    </aside>
  );
}
