import { afterEach, describe, expect, it, vi } from 'vitest';
import { screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { MonitorsRoute } from './monitors';

afterEach(() => vi.unstubAllGlobals());

const monitor = (i: number) => ({
  id: `m${i}`,
  identifier: `0EBB0000000000${String(i).padStart(2, '0')}`,
  profileId: 'p1',
  bedId: null,
  enabled: true,
  lastSeenAt: null,
  dataRate: null,
  hasApiKey: false,
  createdAt: '2026-12-01T20:00:00Z',
  updatedAt: '2026-12-01T20:00:00Z',
});

// The page envelope of every list endpoint (`pageOf` in shared/src/schemas/common.ts): the server
// pages, so the console shows the server's total and asks for each page, never slicing itself.
function gateway() {
  return fakeGateway((c) => {
    if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['integrator']) };
    if (c.url.pathname === '/api/v1/profiles') return { body: { items: [{ id: 'p1', name: 'Bay monitor' }], page: 1, pageSize: 500, total: 1 } };
    if (c.url.pathname === '/api/v1/beds') return { body: { items: [], page: 1, pageSize: 500, total: 0 } };
    if (c.url.pathname === '/api/v1/board/monitors/m3/flush-test')
      return {
        body: {
          latest: {
            assessmentId: 'a9',
            windowEnd: '2026-12-01T21:00:00Z',
            dampingEstimate: 'adequate',
            flushTest: {
              releaseTime: 3,
              naturalFrequencyHz: 21.4,
              dampingRatio: 0.31,
              amplitudeRatio: 0.36,
              oscillations: 3,
              region: 'adequate',
              regionText: 'adequate region of the Gardner chart',
            },
          },
        },
      };
    if (c.url.pathname === '/api/v1/monitors') {
      const page = Number(c.url.searchParams.get('page'));
      return { body: { items: Array.from({ length: 25 }, (_, i) => monitor((page - 1) * 25 + i)), page, pageSize: 25, total: 60 } };
    }
    return undefined;
  });
}

const lastMonitorQuery = (gw: ReturnType<typeof gateway>) =>
  Object.fromEntries(gw.calls.filter((c) => c.url.pathname === '/api/v1/monitors').at(-1)!.url.searchParams);

describe('monitors table', () => {
  it('asks the server for each page, sort and filter, and shows the server total', async () => {
    const gw = gateway();
    renderApp(<MonitorsRoute />);
    expect(await screen.findByText('1–25 of 60')).toBeTruthy();
    expect(lastMonitorQuery(gw)).toMatchObject({ page: '1', pageSize: '25', sort: 'identifier', order: 'asc' });
    // Option lists for the filters ask for one large page.
    expect(gw.calls.find((c) => c.url.pathname === '/api/v1/profiles')!.url.searchParams.get('pageSize')).toBe('500');

    await userEvent.click(screen.getByRole('button', { name: /Next/ }));
    expect(await screen.findByText('26–50 of 60')).toBeTruthy();
    expect(lastMonitorQuery(gw)).toMatchObject({ page: '2' });
    expect(screen.getByText('0EBB000000000025')).toBeTruthy();

    await userEvent.selectOptions(screen.getByLabelText('State'), 'false');
    await waitFor(() => expect(lastMonitorQuery(gw)).toMatchObject({ enabled: 'false', page: '1' }));

    await userEvent.click(screen.getByRole('button', { name: /Samples\/s/ }));
    await waitFor(() => expect(lastMonitorQuery(gw)).toMatchObject({ sort: 'dataRate' }));
  });
});

describe('monitor line check', () => {
  it('shows the latest flush test of a monitor: fn, ζ and the Gardner region in words', async () => {
    gateway();
    renderApp(<MonitorsRoute />);
    await userEvent.click(await screen.findByRole('button', { name: 'Latest flush test of 0EBB000000000003' }));
    const body = await screen.findByTestId('latest-flush-test');
    expect(body.textContent).toContain('21.4 Hz');
    expect(body.textContent).toContain('0.31');
    expect(body.textContent).toContain('Adequate — adequate region of the Gardner chart');
    expect(screen.getByRole('link', { name: 'open the assessment' }).getAttribute('href')).toBe('/assessments/a9');
  });
});
