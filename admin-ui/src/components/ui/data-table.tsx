import { useMemo, type ReactNode } from 'react';
import { flexRender, getCoreRowModel, useReactTable, type ColumnDef, type RowSelectionState, type SortingState } from '@tanstack/react-table';
import type { ListParams } from '@/lib/paging';
import { EmptyState, ErrorState, LoadingState } from './states';

export interface Column<T> {
  key: string;
  header: string;
  /** Server field to sort by; omitted = not sortable. */
  sortField?: string;
  render: (row: T) => ReactNode;
  className?: string;
}

interface DataTableProps<T> {
  caption: string;
  columns: Column<T>[];
  rows: T[] | undefined;
  total: number | undefined;
  rowId: (row: T) => string;
  params: ListParams;
  onParamsChange: (p: ListParams) => void;
  loading?: boolean;
  fetching?: boolean;
  error?: unknown;
  onRetry?: () => void;
  emptyTitle: string;
  emptyHint?: ReactNode;
  selected?: ReadonlySet<string>;
  onSelectedChange?: (ids: Set<string>) => void;
  onRowClick?: (row: T) => void;
}

const PAGE_SIZES = [25, 50, 100];

/**
 * Table over a server-paginated list on TanStack Table's headless model (manual paging, sorting
 * and row selection: each is a request or the caller's state, never client-side slicing).
 */
export function DataTable<T>(props: DataTableProps<T>) {
  const {
    caption,
    columns,
    rows,
    total,
    rowId,
    params,
    onParamsChange,
    loading,
    fetching,
    error,
    onRetry,
    emptyTitle,
    emptyHint,
    selected,
    onSelectedChange,
    onRowClick,
  } = props;
  const selectable = !!onSelectedChange;
  const pageIds = rows?.map(rowId) ?? [];
  const allOnPage = selectable && pageIds.length > 0 && pageIds.every((id) => selected?.has(id));
  const defs = useMemo<ColumnDef<T>[]>(
    () => columns.map((c) => ({ id: c.key, header: c.header, enableSorting: Boolean(c.sortField), cell: ({ row }) => c.render(row.original), meta: c })),
    [columns],
  );
  const sortColumn = columns.find((c) => c.sortField && c.sortField === params.sort);
  const sorting: SortingState = sortColumn ? [{ id: sortColumn.key, desc: params.order === 'desc' }] : [];
  const rowSelection: RowSelectionState = Object.fromEntries(pageIds.filter((id) => selected?.has(id)).map((id) => [id, true]));
  // The React Compiler leaves this component uncompiled (TanStack Table's API returns functions it
  // cannot memoise); nothing here is memoised by hand from them, so the notice is all it says.
  // eslint-disable-next-line react-hooks/incompatible-library
  const table = useReactTable<T>({
    data: rows ?? [],
    columns: defs,
    getRowId: (row) => rowId(row),
    getCoreRowModel: getCoreRowModel(),
    manualPagination: true,
    manualSorting: true,
    enableRowSelection: selectable,
    rowCount: total ?? 0,
    state: { sorting, rowSelection, pagination: { pageIndex: params.page - 1, pageSize: params.pageSize } },
    onSortingChange: (updater) => {
      const next = typeof updater === 'function' ? updater(sorting) : updater;
      const first = next[0];
      const field = first ? columns.find((c) => c.key === first.id)?.sortField : undefined;
      if (field) onParamsChange({ ...params, sort: field, order: first!.desc ? 'desc' : 'asc', page: 1 });
    },
  });

  // Desc first on a new column, then toggling: the order the server lists were designed for.
  const toggleSort = (field: string) => {
    const column = columns.find((c) => c.sortField === field)!;
    const desc = !(params.sort === field && params.order === 'desc');
    table.setSorting([{ id: column.key, desc }]);
  };
  const toggleAll = () => {
    const next = new Set(selected);
    for (const id of pageIds) {
      if (allOnPage) next.delete(id);
      else next.add(id);
    }
    onSelectedChange?.(next);
  };
  const toggleOne = (id: string) => {
    const next = new Set(selected);
    if (next.has(id)) next.delete(id);
    else next.add(id);
    onSelectedChange?.(next);
  };

  const pages = Math.max(1, table.getPageCount());
  const from = total ? (params.page - 1) * params.pageSize + 1 : 0;
  const to = total ? Math.min(total, params.page * params.pageSize) : 0;

  return (
    <div className="overflow-hidden rounded-md border border-line bg-white">
      <div className="overflow-x-auto">
        <table className="w-full border-collapse text-sm" aria-busy={fetching || loading || undefined}>
          <caption className="sr-only">{caption}</caption>
          <thead className="bg-ink-50 text-left text-xs font-semibold text-ink-800">
            <tr>
              {selectable && (
                <th scope="col" className="w-8 px-2 py-1.5">
                  <input type="checkbox" aria-label="Select all on this page" className="accent-ink-700" checked={allOnPage} onChange={toggleAll} />
                </th>
              )}
              {table.getHeaderGroups()[0]!.headers.map((h) => {
                const c = h.column.columnDef.meta as Column<T>;
                const dir = h.column.getIsSorted();
                const sorted = Boolean(dir);
                return (
                  <th
                    key={h.id}
                    scope="col"
                    className={`whitespace-nowrap px-2 py-1.5 ${c.className ?? ''}`}
                    aria-sort={sorted ? (dir === 'asc' ? 'ascending' : 'descending') : undefined}
                  >
                    {c.sortField ? (
                      <button type="button" className="inline-flex items-center gap-1 hover:text-ink-950" onClick={() => toggleSort(c.sortField!)}>
                        {flexRender(h.column.columnDef.header, h.getContext())}
                        <span aria-hidden className={sorted ? 'text-ink-700' : 'text-ink-300'}>
                          {sorted ? (params.order === 'asc' ? '▲' : '▼') : '↕'}
                        </span>
                      </button>
                    ) : (
                      c.header
                    )}
                  </th>
                );
              })}
            </tr>
          </thead>
          <tbody>
            {table.getRowModel().rows.map((r) => {
              const row = r.original;
              const id = r.id;
              return (
                <tr
                  key={id}
                  className={`border-t border-line/70 hover:bg-sand-100/50 ${onRowClick ? 'cursor-pointer' : ''} ${selected?.has(id) ? 'bg-sand-100/70' : ''}`}
                  onClick={
                    onRowClick
                      ? (e) => {
                          if (!(e.target as HTMLElement).closest('a,button,input,label')) onRowClick(row);
                        }
                      : undefined
                  }
                >
                  {selectable && (
                    <td className="px-2 py-1">
                      <input
                        type="checkbox"
                        aria-label={`Select ${id}`}
                        className="accent-ink-700"
                        checked={r.getIsSelected()}
                        onChange={() => toggleOne(id)}
                      />
                    </td>
                  )}
                  {/* Cells render through this render's columns (by id): the table model keeps column defs between renders, and a cell must not close over an earlier render's state. */}
                  {r.getVisibleCells().map((cell) => (
                    <td key={cell.id} className={`px-2 py-1 align-top ${(cell.column.columnDef.meta as Column<T>).className ?? ''}`}>
                      {(columns.find((c) => c.key === cell.column.id) ?? (cell.column.columnDef.meta as Column<T>)).render(r.original)}
                    </td>
                  ))}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {loading && <LoadingState />}
      {!loading && error ? <ErrorState error={error} onRetry={onRetry} /> : null}
      {!loading && !error && rows && rows.length === 0 && <EmptyState title={emptyTitle}>{emptyHint}</EmptyState>}
      <div className="flex items-center justify-between gap-3 border-t border-line bg-paper/50 px-2 py-1.5 text-xs text-muted">
        <span className="num" aria-live="polite">
          {total !== undefined ? `${from}–${to} of ${total}` : ' '}
          {selectable && selected && selected.size > 0 ? ` · ${selected.size} selected` : ''}
          {fetching && !loading ? ' · refreshing…' : ''}
        </span>
        <div className="flex items-center gap-2">
          <label className="flex items-center gap-1">
            Rows
            <select
              className="rounded border border-line bg-white px-1 py-0.5"
              value={params.pageSize}
              onChange={(e) => onParamsChange({ ...params, pageSize: Number(e.target.value), page: 1 })}
            >
              {PAGE_SIZES.map((n) => (
                <option key={n} value={n}>
                  {n}
                </option>
              ))}
            </select>
          </label>
          <button
            type="button"
            className="rounded border border-line bg-white px-2 py-0.5 disabled:opacity-40"
            disabled={params.page <= 1}
            onClick={() => onParamsChange({ ...params, page: params.page - 1 })}
          >
            ‹ Previous
          </button>
          <span className="num">
            Page {params.page} of {pages}
          </span>
          <button
            type="button"
            className="rounded border border-line bg-white px-2 py-0.5 disabled:opacity-40"
            disabled={params.page >= pages}
            onClick={() => onParamsChange({ ...params, page: params.page + 1 })}
          >
            Next ›
          </button>
        </div>
      </div>
    </div>
  );
}
