import type { ReactNode } from 'react';
import type { Filters } from '@/lib/paging';
import { isoToLocalInput, localInputToIso } from '@/lib/format';
import { SelectField, TextField } from './field';
import { FilterBar } from './page';

/** One filter of a list screen: a text box or a choice, stored under `key` in the list's filters. */
export type FilterField = { key: string; label: string; width: string; placeholder?: string } & (
  { kind: 'text' } | { kind: 'select'; options: readonly { value: string; label: string }[] }
);

interface ListFilterState {
  filters: Filters;
  setFilter: (key: string, value: string | undefined) => void;
  clearFilters: () => void;
}

/**
 * The filter bar of a list screen: its fields, an optional From/To window (the `from` and `to`
 * filters, ISO in the request, local time in the boxes) and the screen's own actions at the end.
 */
export function ListFilters({
  list,
  fields,
  timeRange,
  children,
}: {
  list: ListFilterState;
  fields: FilterField[];
  timeRange?: boolean;
  children?: ReactNode;
}) {
  return (
    <FilterBar onClear={list.clearFilters}>
      {fields.map((f) =>
        f.kind === 'select' ? (
          <SelectField
            key={f.key}
            label={f.label}
            placeholder={f.placeholder ?? 'any'}
            wrapClassName={f.width}
            value={list.filters[f.key] ?? ''}
            onChange={(e) => list.setFilter(f.key, e.target.value)}
            options={f.options}
          />
        ) : (
          <TextField
            key={f.key}
            label={f.label}
            placeholder={f.placeholder}
            wrapClassName={f.width}
            value={list.filters[f.key] ?? ''}
            onChange={(e) => list.setFilter(f.key, e.target.value)}
          />
        ),
      )}
      {timeRange &&
        (['from', 'to'] as const).map((key) => (
          <TextField
            key={key}
            label={key === 'from' ? 'From' : 'To'}
            type="datetime-local"
            wrapClassName="w-48"
            value={isoToLocalInput(list.filters[key])}
            onChange={(e) => list.setFilter(key, localInputToIso(e.target.value))}
          />
        ))}
      {children}
    </FilterBar>
  );
}
