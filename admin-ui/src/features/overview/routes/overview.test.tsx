import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { OverviewRoute } from './overview';

afterEach(() => vi.unstubAllGlobals());

const minutes = (fields: string[]) =>
  Array.from({ length: 60 }, (_, i) => ({ t: new Date(Date.UTC(2026, 11, 1, 21, i)).toISOString(), ...Object.fromEntries(fields.map((f) => [f, i % 5])) }));
const OVERVIEW = {
  generatedAt: '2026-12-01T22:00:00Z',
  windowMinutes: 60,
  inbound: { accepted: 120, rejected: 2, quarantined: 1, perMinute: 2, series: minutes(['accepted', 'rejected', 'quarantined']) },
  assessments: { valid: 40, questionable: 9, notValid: 4, series: minutes(['valid', 'questionable', 'notValid']) },
  delivery: { queueDepth: 3, failed: 5, delivered: 44, series: minutes(['delivered', 'failed']) },
  destinations: [{ id: 'ehr', name: 'Demo EHR', state: 'circuit-open', downSince: '2026-12-01T21:50:00Z' }],
  monitors: { total: 4, live: 3 },
};

describe('overview', () => {
  it('links every number to the filtered list behind it, for a role that may open it', async () => {
    fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session'
        ? { body: SESSION(['operator', 'reviewer']) }
        : c.url.pathname === '/api/v1/overview'
          ? { body: OVERVIEW }
          : undefined,
    );
    renderApp(<OverviewRoute />);
    // The roles arrive with the session; the links appear once they are known.
    await waitFor(() => expect(screen.getByText('failed').closest('a')?.getAttribute('href')).toBe('/deliveries?status=failed'));
    expect(screen.getByText('not valid').closest('a')!.getAttribute('href')).toBe('/assessments?verdict=not-valid');
    expect(screen.getByText('quarantined').closest('a')!.getAttribute('href')).toBe('/inbound?outcome=quarantined');
    expect(within(screen.getByRole('list', { name: 'Destination health' })).getByText('circuit open')).toBeTruthy();
    expect(screen.getAllByRole('img', { name: /per minute/ })).toHaveLength(3);
    // An operator/reviewer does not manage monitors: that number is shown but not linked.
    expect(screen.getByText('3 / 4').closest('a')).toBeNull();
  });
});
