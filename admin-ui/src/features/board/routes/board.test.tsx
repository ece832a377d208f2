import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { Board, BedTile } from '@ebbgate/shared';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { BoardRoute } from './board';

afterEach(() => vi.unstubAllGlobals());

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

  it('asks the server for the unit and state chosen, keyboard only, and pages', async () => {
    const { calls } = fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session'
        ? { body: SESSION(['operator']) }
        : c.url.pathname === '/api/v1/board'
          ? { body: BOARD([tile({})], { total: 100 }) }
          : undefined,
    );
    const user = userEvent.setup();
    renderApp(<BoardRoute />, { route: '/board' });
    await screen.findByRole('article', { name: /ICU-01/ });
    expect(screen.getByRole('option', { name: 'Stale (1)' })).toBeTruthy();
    await user.tab();
    const unit = screen.getByLabelText('Unit');
    unit.focus();
    await user.keyboard('{ArrowDown}');
    await user.selectOptions(unit, 'Theatres');
    await waitFor(() => expect(calls.some((c) => c.url.pathname === '/api/v1/board' && c.url.searchParams.get('unit') === 'Theatres')).toBe(true));
    await user.selectOptions(screen.getByLabelText('Data state'), 'stale');
    await waitFor(() => expect(calls.some((c) => c.url.searchParams.get('state') === 'stale' && c.url.searchParams.get('unit') === 'Theatres')).toBe(true));
    const next = screen.getByRole('button', { name: 'Next page' });
    next.focus();
    await user.keyboard('{Enter}');
    await waitFor(() => expect(calls.some((c) => c.url.searchParams.get('page') === '2')).toBe(true));
    expect(screen.getByText(/Page 2 of 3/)).toBeTruthy();
  });
});
