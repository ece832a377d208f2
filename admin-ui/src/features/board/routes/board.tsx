import { useSearchParams } from 'react-router-dom';
import type { BedDataState } from '@ebbgate/shared';
import { formatDateTime } from '@/lib/format';
import { Button } from '@/components/ui/button';
import { SelectField, TextField } from '@/components/ui/field';
import { FilterBar, PageHeader } from '@/components/ui/page';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/states';
import { Cautions } from '@/components/analysis/cautions';
import { VerdictLegend } from '@/components/analysis/verdict-mark';
import { BOARD_POLL_MS, useBoard } from '../api/board';
import { BedGrid } from '../components/bed-grid';

const STATE_TEXT: Record<BedDataState, string> = {
  sending: 'Sending',
  stale: 'Stale',
  'no-patient': 'No patient',
  quarantining: 'Quarantining',
  'no-monitor': 'No monitor',
};
/** One answer holds the whole board up to the gateway's largest page; beyond that, pages of this many. */
const PAGE_SIZE = 500;

/**
 * Every bed at a glance: one call answers for the whole board (filtered and counted on the
 * server), and the tiles are virtualised by rows so 200 beds and more scroll smoothly.
 */
export function BoardRoute() {
  const [search, setSearch] = useSearchParams();
  const unit = search.get('unit') ?? undefined;
  const state = (search.get('state') as BedDataState | null) ?? undefined;
  const q = search.get('q') ?? undefined;
  const page = Math.max(1, Number(search.get('page') ?? 1) || 1);
  const board = useBoard({ unit, state, q, page, pageSize: PAGE_SIZE });
  const set = (key: string, value: string | undefined) => {
    const next = new URLSearchParams(search);
    if (value) next.set(key, value);
    else next.delete(key);
    if (key !== 'page') next.delete('page');
    setSearch(next, { replace: true });
  };

  if (board.isPending) return <LoadingState label="Loading the beds…" />;
  if (board.error && !board.data) return <ErrorState error={board.error} onRetry={() => board.refetch()} />;
  const b = board.data!;
  const pages = Math.max(1, Math.ceil(b.total / b.pageSize));
  const stateOptions = (Object.keys(STATE_TEXT) as BedDataState[]).map((s) => ({ value: s, label: `${STATE_TEXT[s]} (${b.counts[s] ?? 0})` }));

  return (
    <>
      <PageHeader
        title="Beds board"
        description={
          <>
            Every bed's latest window and data state · refreshed every {BOARD_POLL_MS / 1000} s · updated{' '}
            <span aria-live="polite">{formatDateTime(b.generatedAt)}</span>
          </>
        }
      />
      <FilterBar onClear={unit || state || q ? () => setSearch(new URLSearchParams(), { replace: true }) : undefined}>
        <SelectField
          label="Unit"
          value={unit ?? ''}
          placeholder="All units"
          options={b.units.map((u) => ({ value: u, label: u }))}
          onChange={(e) => set('unit', e.target.value || undefined)}
          wrapClassName="w-44"
        />
        <SelectField
          label="Data state"
          value={state ?? ''}
          placeholder="All states"
          options={stateOptions}
          onChange={(e) => set('state', e.target.value || undefined)}
          wrapClassName="w-48"
        />
        <TextField
          label="Bed, monitor or patient"
          defaultValue={q ?? ''}
          onKeyDown={(e) => {
            if (e.key === 'Enter') set('q', (e.target as HTMLInputElement).value.trim() || undefined);
          }}
          onBlur={(e) => {
            if ((e.target.value.trim() || undefined) !== q) set('q', e.target.value.trim() || undefined);
          }}
          wrapClassName="w-56"
        />
      </FilterBar>
      <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
        <p className="text-sm text-ink-800" aria-label="Beds by data state">
          {(Object.keys(STATE_TEXT) as BedDataState[]).map((s) => `${STATE_TEXT[s]} ${b.counts[s] ?? 0}`).join(' · ')}
        </p>
        <p className="text-sm text-muted">
          {b.total} bed{b.total === 1 ? '' : 's'} shown
        </p>
        <VerdictLegend />
      </div>
      {b.items.length === 0 ? <EmptyState title="No beds match">Change the unit or state filter.</EmptyState> : <BedGrid tiles={b.items} />}
      {pages > 1 && (
        <nav aria-label="Board pages" className="mt-3 flex items-center gap-2 text-sm">
          <Button size="sm" disabled={page <= 1} onClick={() => set('page', String(page - 1))}>
            Previous page
          </Button>
          <span>
            Page {page} of {pages} · {b.total} beds
          </span>
          <Button size="sm" disabled={page >= pages} onClick={() => set('page', String(page + 1))}>
            Next page
          </Button>
        </nav>
      )}
      <div className="mt-3">
        <Cautions compact />
      </div>
    </>
  );
}
