import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Route, Routes } from 'react-router-dom';
import type { BedTrend } from '@ebbgate/shared';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { BedTrendRoute } from './bed-trend';

afterEach(() => vi.unstubAllGlobals());

const TREND: BedTrend = {
  bed: { id: 'b1', name: 'ICU-01', unit: 'Intensive care' },
  from: '2026-12-01T16:00:00Z',
  to: '2026-12-01T22:00:00Z',
  windows: 3,
  downsampled: false,
  bucketSeconds: null,
  points: [
    { t: '2026-12-01T21:00:10Z', assessmentId: 'a1', verdict: 'valid', ppv: 11.2, spv: 7.5, deltaPop: 13, heartRate: 82, respiratoryRate: 14, windows: 1 },
    {
      t: '2026-12-01T21:00:20Z',
      assessmentId: 'a2',
      verdict: 'questionable',
      ppv: 12.8,
      spv: 8,
      deltaPop: null,
      heartRate: 84,
      respiratoryRate: 14,
      windows: 1,
    },
    {
      t: '2026-12-01T21:00:30Z',
      assessmentId: 'a3',
      verdict: 'not-valid',
      ppv: 25.1,
      spv: 12,
      deltaPop: null,
      heartRate: 120,
      respiratoryRate: 14,
      windows: 1,
    },
  ],
  events: [
    { t: '2026-12-01T21:00:15Z', kind: 'tidal-volume', label: 'Tidal volume 400 → 530 mL', assessmentId: null },
    { t: '2026-12-01T21:01:30Z', kind: 'tidal-volume-challenge', label: 'Tidal volume challenge: positive', assessmentId: 'a3' },
  ],
  greyZone: { lower: 9, upper: 13, label: 'published grey zone', source: 'Cannesson et al., Anesthesiology 2011' },
};

function render(route = '/board/beds/b1') {
  return renderApp(
    <Routes>
      <Route path="/board/beds/:bedId" element={<BedTrendRoute />} />
      <Route path="/assessments/:id" element={<p>assessment page</p>} />
    </Routes>,
    { route },
  );
}

describe('bed trend', () => {
  it('gives the chart a table of the same values with verdicts in words, the grey zone with its source, events and CSV export', async () => {
    fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session'
        ? { body: SESSION(['reviewer']) }
        : c.url.pathname === '/api/v1/board/beds/b1/trend'
          ? { body: TREND }
          : undefined,
    );
    render();
    const table = await screen.findByRole('table');
    const rows = within(table).getAllByRole('row').slice(1);
    expect(rows).toHaveLength(3);
    // Newest first; the not-valid PPV is struck through, its heart rate (a measurement) is not.
    expect(within(rows[0]!).getByText('Not valid')).toBeTruthy();
    expect(within(rows[0]!).getByText('25.1').className).toContain('line-through');
    expect(within(rows[0]!).getByText('120').className).not.toContain('line-through');
    expect(within(rows[2]!).getByRole('link').getAttribute('href')).toBe('/assessments/a1');
    expect(screen.getByTestId('grey-zone').textContent).toContain('Cannesson et al., Anesthesiology 2011');
    expect(screen.getByTestId('grey-zone').textContent).toContain('9.0–13.0 %');
    const events = screen.getByRole('list', { name: 'Events in the span' });
    expect(within(events).getByText('Tidal volume 400 → 530 mL')).toBeTruthy();
    expect(within(events).getByRole('link', { name: 'Tidal volume challenge: positive' }).getAttribute('href')).toBe('/assessments/a3');
    expect(screen.getByRole('link', { name: 'Export CSV' }).getAttribute('href')).toBe('/api/v1/board/beds/b1/trend.csv?hours=6');
    expect(screen.getByRole('img', { name: /Trend chart of ICU-01: 3 points/ })).toBeTruthy();
  });

  it('changes the span from the keyboard and asks the server for it', async () => {
    const { calls } = fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session'
        ? { body: SESSION(['reviewer']) }
        : c.url.pathname === '/api/v1/board/beds/b1/trend'
          ? { body: TREND }
          : undefined,
    );
    const user = userEvent.setup();
    render();
    await screen.findByRole('table');
    const six = screen.getByRole('radio', { name: '6 h' });
    expect((six as HTMLInputElement).checked).toBe(true);
    six.focus();
    await user.keyboard('{ArrowRight}');
    await waitFor(() => expect(calls.some((c) => c.url.pathname.endsWith('/trend') && c.url.searchParams.get('hours') === '12')).toBe(true));
    await user.click(screen.getByRole('checkbox', { name: 'HR' }));
    expect((screen.getByRole('checkbox', { name: 'HR' }) as HTMLInputElement).checked).toBe(true);
  });
});
