import { describe, expect, it, afterEach, beforeEach, vi } from 'vitest';
import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { Board, BedTile } from '@ebbgate/shared';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { BoardRoute } from './board';

afterEach(() => {
  vi.unstubAllGlobals();
  vi.restoreAllMocks();
});

const tile = (over: Partial<BedTile>): BedTile => ({
  bedId: 'b1',
  bedName: 'ICU-01',
  unit: 'Intensive care',
  patientRef: 'Patient/p-1',
  patientName: null,
  patientMrn: null,
  monitor: { id: 'm1', identifier: '02A0B1FFFE000001', lastSeenAt: '2026-12-01T21:59:58Z' },
  state: 'sending',
  stateReason: 'Data arrives and results find their patient.',
  latest: {
    assessmentId: 'a1',
    windowEnd: '2026-12-01T21:59:50Z',
    ageSeconds: 10,
    verdict: 'valid',
    ppv: 14.2,
    spv: 9.1,
    deltaPop: 16.4,
    mainFlag: null,
    flagCount: 0,
  },
  trend: Array.from({ length: 13 }, (_, i) => ({
    t: new Date(Date.UTC(2026, 11, 1, 21, i * 5)).toISOString(),
    ppv: 10 + i,
    verdict: i === 4 ? 'not-valid' : 'valid',
  })),
  ...over,
});
const BOARD = (items: BedTile[], extra: Partial<Board> = {}): Board => ({
  generatedAt: '2026-12-01T22:00:00Z',
  staleAfterSeconds: 60,
  units: ['Intensive care', 'Theatres'],
  counts: { sending: 1, stale: 1, 'no-patient': 0, quarantining: 0, 'no-monitor': 0 },
  items,
  page: 1,
  pageSize: 48,
  total: items.length,
  ...extra,
});

describe('beds board', () => {
  beforeEach(() => layout());
  it('shows each bed with patient, values, verdict in words and shape, the main flag in words and its state; not-valid values are struck through', async () => {
    const items = [
      tile({ patientName: 'Ines Varga-Lowe', patientMrn: 'HGH-400388' }),
      tile({
        bedId: 'b2',
        bedName: 'ICU-02',
        state: 'stale',
        stateReason: 'Nothing received for 300 s.',
        latest: {
          assessmentId: 'a2',
          windowEnd: '2026-12-01T21:55:00Z',
          ageSeconds: 300,
          verdict: 'not-valid',
          ppv: 22.5,
          spv: null,
          deltaPop: null,
          mainFlag: { code: 'irregular-rhythm', severity: 'critical', reason: 'Beat intervals vary too much' },
          flagCount: 2,
        },
      }),
    ];
    fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session' ? { body: SESSION(['reviewer']) } : c.url.pathname === '/api/v1/board' ? { body: BOARD(items) } : undefined,
    );
    renderApp(<BoardRoute />, { route: '/board' });
    const first = await screen.findByRole('article', { name: /ICU-01/ });
    // Bed and unit read as two words: the heading's text (what a browser names the tile by) has the space.
    expect(first.getAttribute('aria-labelledby')).toBe('bed-b1');
    expect(document.getElementById('bed-b1')!.textContent).toBe('ICU-01 Intensive care');
    expect(within(first).getByTestId('patient').textContent).toBe('Ines Varga-Lowe · MRN HGH-400388');
    expect(within(first).getByText('Valid')).toBeTruthy();
    expect(first.querySelector('[data-shape="valid"]')).not.toBeNull();
    expect(within(first).getByText('sending')).toBeTruthy();
    expect(within(first).getByRole('link', { name: 'ICU-01' }).getAttribute('href')).toBe('/board/beds/b1');
    expect(within(first).getByRole('img', { name: /PPV over the last hour/ })).toBeTruthy();
    const second = screen.getByRole('article', { name: /ICU-02/ });
    expect(within(second).getByText('stale')).toBeTruthy();
    expect(within(second).getByTestId('main-flag').textContent).toBe('Irregular rhythm — Beat intervals vary too much (+1 more)');
    const struck = within(second).getByText('22.5');
    expect(struck.className).toContain('line-through');
    expect(struck.textContent).toContain('(not valid)');
    expect(within(second).getByText('Not valid')).toBeTruthy();
    expect(within(second).getByTestId('patient').textContent).toBe('Patient/p-1');
  });

  it('asks the server for the unit and state chosen, keyboard only, for the whole board in one call', async () => {
    const { calls } = fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session'
        ? { body: SESSION(['operator']) }
        : c.url.pathname === '/api/v1/board'
          ? { body: BOARD([tile({})]) }
          : undefined,
    );
    const user = userEvent.setup();
    renderApp(<BoardRoute />, { route: '/board' });
    await screen.findByRole('article', { name: /ICU-01/ });
    expect(screen.getByRole('option', { name: 'Stale (1)' })).toBeTruthy();
    const first = calls.find((c) => c.url.pathname === '/api/v1/board')!;
    expect(first.url.searchParams.get('pageSize')).toBe('500');
    await user.tab();
    const unit = screen.getByLabelText('Unit');
    unit.focus();
    await user.keyboard('{ArrowDown}');
    await user.selectOptions(unit, 'Theatres');
    await waitFor(() => expect(calls.some((c) => c.url.pathname === '/api/v1/board' && c.url.searchParams.get('unit') === 'Theatres')).toBe(true));
    await user.selectOptions(screen.getByLabelText('Data state'), 'stale');
    await waitFor(() => expect(calls.some((c) => c.url.searchParams.get('state') === 'stale' && c.url.searchParams.get('unit') === 'Theatres')).toBe(true));
    // One page holds it all: no pager.
    expect(screen.queryByRole('navigation', { name: 'Board pages' })).toBeNull();
  });

  it('pages beyond the largest answer the gateway gives', async () => {
    const { calls } = fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session'
        ? { body: SESSION(['operator']) }
        : c.url.pathname === '/api/v1/board'
          ? { body: BOARD([tile({})], { total: 1200, pageSize: 500 }) }
          : undefined,
    );
    const user = userEvent.setup();
    renderApp(<BoardRoute />, { route: '/board' });
    await screen.findByRole('article', { name: /ICU-01/ });
    const next = screen.getByRole('button', { name: 'Next page' });
    next.focus();
    await user.keyboard('{Enter}');
    await waitFor(() => expect(calls.some((c) => c.url.searchParams.get('page') === '2')).toBe(true));
    expect(screen.getByText(/Page 2 of 3/)).toBeTruthy();
  });
});

/**
 * happy-dom lays nothing out, so the sizes a browser would measure are given here: the grid's
 * scroll area is 600 px tall and 1200 px wide (4 tiles a row at 280 px and more each), a drawn
 * row 260 px. Everything else (which rows are drawn, scrolling, focus) is the real virtualiser.
 */
const VIEW_PX = 600;
const ROW_PX = 268;
const ROW_STEP = ROW_PX + 8;
function layout() {
  const isGrid = (el: HTMLElement) => el.dataset.testid === 'bed-grid';
  vi.spyOn(HTMLElement.prototype, 'clientHeight', 'get').mockImplementation(function (this: HTMLElement) {
    return isGrid(this) ? VIEW_PX : 0;
  });
  vi.spyOn(HTMLElement.prototype, 'clientWidth', 'get').mockImplementation(function (this: HTMLElement) {
    return isGrid(this) ? 1200 : 0;
  });
  // The scroll area's content is as tall as the virtualiser's spacer says.
  vi.spyOn(HTMLElement.prototype, 'scrollHeight', 'get').mockImplementation(function (this: HTMLElement) {
    return isGrid(this) ? parseFloat((this.querySelector('[data-testid="bed-rows"]') as HTMLElement | null)?.style.height ?? '0') : 0;
  });
  vi.spyOn(HTMLElement.prototype, 'offsetHeight', 'get').mockImplementation(function (this: HTMLElement) {
    return this.dataset.index !== undefined ? ROW_PX : 0;
  });
}

const bedName = (i: number) => `ICU-${String(i).padStart(3, '0')}`;
const many = (n: number, names: (i: number) => string = bedName) =>
  Array.from({ length: n }, (_, k) => tile({ bedId: `b${k + 1}`, bedName: names(k + 1), latest: { ...tile({}).latest!, assessmentId: `a${k + 1}` } }));
/** A reviewer's session and the board answer `items()` gives at the time of each call; then the board screen. */
function serveBoard(items: () => BedTile[]) {
  fakeGateway((c) =>
    c.url.pathname === '/api/v1/auth/session'
      ? { body: SESSION(['reviewer']) }
      : c.url.pathname === '/api/v1/board'
        ? { body: BOARD(items(), { pageSize: 500 }) }
        : undefined,
  );
  renderApp(<BoardRoute />, { route: '/board' });
}
const drawnBeds = () => screen.queryAllByRole('article').map((a) => a.getAttribute('data-bed'));

describe('beds board with 200 beds', () => {
  beforeEach(() => layout());

  it('draws only the rows in view and a few either side, and scrolling draws the others', async () => {
    serveBoard(() => many(200));
    await screen.findByRole('article', { name: /^ICU-001/ });
    expect(screen.getByText('200 beds shown')).toBeTruthy();
    const grid = screen.getByRole('region', { name: 'Beds' });
    // 600 px show rows 1–3 (of 50); two more are drawn below: 5 rows of 4, 20 of the 200 tiles.
    const visibleRows = Math.ceil(VIEW_PX / ROW_STEP);
    const drawn = drawnBeds();
    expect(drawn).toEqual(Array.from({ length: (visibleRows + 2) * 4 }, (_, i) => bedName(i + 1)));
    // The scroll area is as tall as all 50 rows would be.
    expect(screen.getByTestId('bed-rows').style.height).toBe(`${50 * ROW_STEP - 8}px`);

    // Scroll to row 40 (beds 157–160): it and its neighbours are drawn, the top rows are gone.
    grid.scrollTop = 39 * ROW_STEP;
    fireEvent.scroll(grid);
    await waitFor(() => expect(drawnBeds()).toContain(bedName(157)));
    const after = drawnBeds();
    expect(after).not.toContain(bedName(1));
    expect(after).toContain(bedName(160));
    expect(after.length).toBeLessThanOrEqual((visibleRows + 4) * 4);
    // To the end: the last bed.
    grid.scrollTop = 50 * ROW_STEP - VIEW_PX;
    fireEvent.scroll(grid);
    await waitFor(() => expect(drawnBeds()).toContain(bedName(200)));
  });

  it('Tab walks from the last tile in view onto the next row, which then scrolls into view and draws the rows after it', async () => {
    const user = userEvent.setup();
    serveBoard(() => many(200));
    await screen.findByRole('article', { name: /^ICU-001/ });
    const grid = screen.getByRole('region', { name: 'Beds' });
    const visibleRows = Math.ceil(VIEW_PX / ROW_STEP);
    // The last tile of the last row in view (bed 12), then its last link; Tab goes on to bed 13.
    const lastInView = screen.getByRole('article', { name: new RegExp(`^${bedName(visibleRows * 4)}`) });
    within(lastInView)
      .getByRole('link', { name: `Trend of ${bedName(visibleRows * 4)}` })
      .focus();
    await user.tab();
    const next = bedName(visibleRows * 4 + 1);
    expect(document.activeElement?.textContent).toBe(next);
    expect(document.activeElement?.closest('article')?.getAttribute('data-bed')).toBe(next);
    // Its row is now in view, and the rows beyond it are drawn for the next Tab.
    await waitFor(() => expect(grid.scrollTop).toBe(4 * ROW_STEP - 8 - VIEW_PX));
    // A browser announces the scroll with an event; happy-dom does not, so the test does.
    fireEvent.scroll(grid);
    await waitFor(() => expect(drawnBeds()).toContain(bedName((visibleRows + 3) * 4)));
    expect(drawnBeds()).not.toContain(bedName(visibleRows * 4 + 30));
    // Tab on through four more rows of beds (three links each): every one is reached in turn.
    for (let k = 2; k <= 17; k++) {
      for (let step = 0; step < 3; step++) await user.tab();
      fireEvent.scroll(grid);
      expect(document.activeElement?.closest('article')?.getAttribute('data-bed')).toBe(bedName(visibleRows * 4 + k));
    }
    expect(drawnBeds()).not.toContain(bedName(1));
  }, 30_000);

  it('keeps the focused tile drawn when scrolled away from, and keeps focus on it across a refresh that draws it anew', async () => {
    let items = many(200);
    serveBoard(() => items);
    await screen.findByRole('article', { name: /^ICU-002/ });
    const grid = screen.getByRole('region', { name: 'Beds' });
    const trend = within(screen.getByRole('article', { name: /^ICU-002/ })).getByRole('link', { name: 'Trend of ICU-002' });
    trend.focus();
    grid.scrollTop = 30 * ROW_STEP;
    fireEvent.scroll(grid);
    await waitFor(() => expect(drawnBeds()).toContain(bedName(121)));
    // Row 1 left the view but holds focus: still drawn, focus still on its link.
    expect(drawnBeds()).toContain(bedName(2));
    expect(document.activeElement).toBe(trend);

    // A new bed at the top shifts every bed one place: ICU-002 moves to another row and is drawn anew.
    items = many(201, (i) => (i === 1 ? 'ICU-000' : bedName(i - 1))).map((t, k) => ({ ...t, bedId: k === 0 ? 'b0' : `b${k}` }));
    // The next poll, brought forward: TanStack Query refetches when the page becomes visible again.
    fireEvent(window, new Event('visibilitychange'));
    await screen.findByRole('article', { name: /^ICU-000/ });
    await waitFor(() => expect((document.activeElement as HTMLElement | null)?.getAttribute('aria-label')).toBe('Trend of ICU-002'));
    expect(document.activeElement).not.toBe(trend);
  }, 30_000);
});
