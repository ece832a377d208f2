import { useEffect, useMemo, useRef, useState, type FocusEvent } from 'react';
import { defaultRangeExtractor, useVirtualizer, type Range } from '@tanstack/react-virtual';
import type { BedTile as Tile } from '@ebbgate/shared';
import { useElementWidth } from '@/hooks/use-element-width';
import { BedTile } from './bed-tile';

/** Narrowest tile that still fits three values side by side; the grid packs as many as fit. */
const MIN_TILE_PX = 280;
const GAP_PX = 8;
const MAX_COLUMNS = 5;
/** A tile with a latest window is about this tall; rows are measured once drawn. */
const ROW_ESTIMATE_PX = 268;
/** Rows drawn beyond the visible ones: Tab from the last visible tile lands on a drawn one, which the browser scrolls into view. */
const OVERSCAN_ROWS = 2;

export function columnsFor(width: number): number {
  return Math.max(1, Math.min(MAX_COLUMNS, Math.floor((width + GAP_PX) / (MIN_TILE_PX + GAP_PX))));
}

/** Where focus was inside the grid: the bed and which of its links (by position), to put it back if the tile is drawn anew. */
interface FocusSpot {
  bedId: string;
  control: number;
  el: Element;
}

const FOCUSABLE = 'a[href],button:not([disabled])';

/**
 * The tiles, virtualised by rows inside their own scroll area: only the rows in view (and a couple
 * either side) are in the document, so 200 beds scroll smoothly. Keyboard use stays whole: the row
 * holding focus is always drawn, the overscan rows give Tab somewhere to go, and a refresh that
 * draws the focused tile anew puts focus back on the same link.
 */
export function BedGrid({ tiles }: { tiles: Tile[] }) {
  const { host, width } = useElementWidth<HTMLDivElement>(undefined, 1200);
  const columns = columnsFor(width);
  const rows = useMemo(() => {
    const out: Tile[][] = [];
    for (let i = 0; i < tiles.length; i += columns) out.push(tiles.slice(i, i + columns));
    return out;
  }, [tiles, columns]);
  const [focused, setFocused] = useState<FocusSpot | null>(null);
  const lastFocus = useRef<FocusSpot | null>(null);
  const focusedRow = focused ? Math.floor(tiles.findIndex((t) => t.bedId === focused.bedId) / columns) : -1;

  // The React Compiler leaves this component uncompiled (TanStack Virtual's API returns functions it
  // cannot memoise); nothing from it is memoised by hand here.
  // eslint-disable-next-line react-hooks/incompatible-library
  const virtualizer = useVirtualizer({
    count: rows.length,
    getScrollElement: () => host.current,
    estimateSize: () => ROW_ESTIMATE_PX,
    overscan: OVERSCAN_ROWS,
    gap: GAP_PX,
    // A row is its first bed: after a refresh the same beds keep their measured height.
    getItemKey: (i) => rows[i]?.[0]?.bedId ?? i,
    rangeExtractor: (range: Range) => {
      const drawn = defaultRangeExtractor(range);
      return focusedRow >= 0 && focusedRow < range.count && !drawn.includes(focusedRow) ? [...drawn, focusedRow].sort((a, b) => a - b) : drawn;
    },
  });

  const spotOf = (el: Element | null): FocusSpot | null => {
    const tile = el?.closest<HTMLElement>('[data-bed-id]');
    if (!tile || !el) return null;
    return { bedId: tile.dataset.bedId!, control: [...tile.querySelectorAll(FOCUSABLE)].indexOf(el), el };
  };
  const onFocus = (e: FocusEvent<HTMLDivElement>) => {
    const spot = spotOf(e.target);
    lastFocus.current = spot;
    if (spot?.bedId !== focused?.bedId) setFocused(spot);
    // Tab onto a tile drawn ahead of the view brings its row fully into view (and the rows after it into the document).
    const row = spot ? Math.floor(tiles.findIndex((t) => t.bedId === spot.bedId) / columns) : -1;
    if (row >= 0) virtualizer.scrollToIndex(row, { align: 'auto' });
  };
  const onBlur = (e: FocusEvent<HTMLDivElement>) => {
    // Focus moving out of the grid lets its row go; focus going nowhere keeps the spot for the effect below.
    if (e.relatedTarget && !e.currentTarget.contains(e.relatedTarget as Node)) {
      lastFocus.current = null;
      setFocused(null);
    }
  };

  // After a refresh: if the focused tile was drawn anew (its old link left the document), focus fell
  // to the page; put it back. A link still in the document means the user moved focus away.
  useEffect(() => {
    const spot = lastFocus.current;
    const grid = host.current;
    if (!spot || !grid || spot.el.isConnected || (document.activeElement && document.activeElement !== document.body)) return;
    const tile = grid.querySelector<HTMLElement>(`[data-bed-id="${CSS.escape(spot.bedId)}"]`);
    if (!tile) {
      // The bed left the list (another state now, under a state filter): the grid itself keeps focus.
      grid.focus({ preventScroll: true });
      return;
    }
    const controls = tile.querySelectorAll<HTMLElement>(FOCUSABLE);
    (controls[spot.control] ?? controls[0] ?? tile).focus({ preventScroll: true });
  }, [tiles, host]);

  return (
    <div
      ref={host}
      data-testid="bed-grid"
      tabIndex={-1}
      onFocus={onFocus}
      onBlur={onBlur}
      className="max-h-[calc(100dvh-15rem)] min-h-80 overflow-y-auto rounded-md focus:outline-none"
      role="region"
      aria-label="Beds"
      aria-describedby="bed-grid-hint"
    >
      <p id="bed-grid-hint" className="sr-only">
        {tiles.length} bed{tiles.length === 1 ? '' : 's'}, {columns} a row; more are drawn as you scroll or move with Tab.
      </p>
      <div data-testid="bed-rows" className="relative w-full" style={{ height: virtualizer.getTotalSize() }}>
        {virtualizer.getVirtualItems().map((row) => (
          <div
            key={row.key}
            data-index={row.index}
            ref={virtualizer.measureElement}
            className="absolute left-0 top-0 grid w-full gap-2"
            style={{ transform: `translateY(${row.start}px)`, gridTemplateColumns: `repeat(${columns}, minmax(0, 1fr))` }}
          >
            {rows[row.index]!.map((t) => (
              <BedTile key={t.bedId} tile={t} />
            ))}
          </div>
        ))}
      </div>
    </div>
  );
}
