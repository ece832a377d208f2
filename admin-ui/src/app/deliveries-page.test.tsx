import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { DeliveriesPage } from '@/app/pages';

afterEach(() => vi.unstubAllGlobals());

const delivery = (id: string) => ({
  id,
  assessmentId: `a-${id}`,
  destinationId: 'ehr',
  index: 'ppv',
  kind: 'create',
  status: 'failed',
  patientRef: 'HGH-1',
  attemptCount: 3,
  nextAttemptAt: null,
  lastHttpStatus: 503,
  lastError: 'Service Unavailable',
  createdAt: '2026-12-01T21:00:00Z',
  deliveredAt: null,
});

function gateway(roles: string[]) {
  return fakeGateway((c) => {
    if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(roles) };
    if (c.url.pathname === '/api/v1/destinations')
      return { body: [{ id: 'ehr', name: 'Demo EHR', kind: 'fhir', paused: false, circuitState: 'open', consecutiveFailures: 5, state: 'circuit-open' }] };
    if (c.url.pathname === '/api/v1/deliveries') return { body: { items: ['d1', 'd2', 'd3'].map(delivery), page: 1, pageSize: 25, total: 3 } };
    if (c.url.pathname === '/api/v1/deliveries/retry') {
      const [id] = (c.body as { ids: string[] }).ids;
      // Answer shape of deliveryActionResultSchema (shared/src/schemas/delivery.ts).
      if (id === 'd2') return { body: { updated: [], skipped: [{ id, reason: 'destination is paused' }] } };
      return { body: { updated: [id], skipped: [] } };
    }
    // After the requeue the console follows the item until the sender has tried it.
    if (c.url.pathname === '/api/v1/deliveries/d1') return { body: { ...delivery('d1'), status: 'delivered', deliveredAt: '2026-12-01T22:00:00Z' } };
    return undefined;
  });
}

describe('failed deliveries', () => {
  it('lists failed deliveries by default and retries the selected ones one by one with their own outcome', async () => {
    const gw = gateway(['operator']);
    renderApp(<DeliveriesPage />);
    await screen.findByText('1–3 of 3');
    expect(gw.calls.find((c) => c.url.pathname === '/api/v1/deliveries')!.url.searchParams.get('status')).toBe('failed');
    expect(within(screen.getByRole('region', { name: 'Destinations' })).getByText('circuit open')).toBeTruthy(); // the API's state, in the same words as the overview

    await userEvent.click(screen.getByLabelText('Select d1'));
    await userEvent.click(screen.getByLabelText('Select d2'));
    await userEvent.click(screen.getByRole('button', { name: 'Retry selected (2)' }));
    await userEvent.click(within(screen.getByRole('dialog', { name: 'Retry deliveries' })).getByRole('button', { name: 'Retry 2' }));

    const progress = await screen.findByRole('region', { name: 'Retry' });
    await waitFor(() => expect(progress.querySelectorAll('[data-outcome="done"]')).toHaveLength(1), { timeout: 5_000 });
    await waitFor(() => expect(progress.querySelectorAll('[data-outcome="failed"]')).toHaveLength(1));
    expect(within(progress).getByText('delivered')).toBeTruthy();
    expect(within(progress).getByText('not requeued: destination is paused')).toBeTruthy();
    const posts = gw.calls.filter((c) => c.url.pathname === '/api/v1/deliveries/retry').map((c) => c.body);
    expect(posts).toEqual(expect.arrayContaining([{ ids: ['d1'] }, { ids: ['d2'] }]));
    expect(posts).toHaveLength(2);
  });

  it('a reviewer can read deliveries but gets no selection or retry', async () => {
    gateway(['reviewer']);
    renderApp(<DeliveriesPage />);
    await screen.findByText('1–3 of 3');
    expect(screen.queryByLabelText('Select d1')).toBeNull();
    expect(screen.queryByRole('button', { name: /Retry selected/ })).toBeNull();
  });
});
