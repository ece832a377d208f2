import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fakeGateway, renderApp, SESSION, type FakeCall } from '@/test/render';
import { ReanalyseRoute } from './reanalyse';

afterEach(() => vi.unstubAllGlobals());

const run = (id: string, engineVersion: string, verdict: string, ppv: number, createdAt: string) => ({
  id,
  monitorId: 'm1',
  bedId: 'b1',
  patientRef: null,
  patientName: null,
  patientMrn: null,
  windowStart: '2026-12-01T21:00:00.000Z',
  windowEnd: '2026-12-01T21:00:10.000Z',
  verdict,
  ppv,
  spv: 7,
  deltaPop: null,
  perfusionIndex: null,
  heartRate: 80,
  respiratoryRate: 14,
  flags: [],
  engineVersion,
  deliveryStatus: null,
  enteredInError: false,
  createdAt,
});

function gateway(after: () => boolean, extra?: (c: FakeCall) => { body: unknown } | undefined) {
  return fakeGateway((c) => {
    if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['integrator']) };
    if (c.url.pathname === '/api/v1/beds')
      return {
        body: {
          items: [{ id: 'b1', name: 'ICU bed 1', unit: 'ICU', locationIdentifier: 'ICU-01', monitorId: 'm1', createdAt: '', updatedAt: '' }],
          page: 1,
          pageSize: 500,
          total: 1,
        },
      };
    if (c.url.pathname === '/api/v1/analysis/reanalyse') return { body: { engineVersion: '2.0.0', queued: 1 } };
    if (c.url.pathname === '/api/v1/assessments') {
      const items = [
        run('old', '1.1.0', 'valid', 11.2, '2026-12-01T21:00:11Z'),
        ...(after() ? [run('new', '2.0.0', 'questionable', 11.9, '2026-12-02T04:00:00Z')] : []),
      ];
      return { body: { items, page: 1, pageSize: 500, total: items.length } };
    }
    return extra?.(c);
  });
}

describe('reanalyse', () => {
  it('queues a bed over a span for the bed’s monitor and shows the earlier and new result side by side once it arrives', async () => {
    let analysed = false;
    const gw = gateway(() => analysed);
    const user = userEvent.setup();
    renderApp(<ReanalyseRoute />, { route: '/reanalyse' });
    await screen.findByRole('option', { name: 'ICU bed 1 · ICU' });
    await user.selectOptions(screen.getByLabelText('Bed'), 'b1');
    await user.type(screen.getByLabelText('From'), '2026-12-01T20:00');
    await user.type(screen.getByLabelText('To'), '2026-12-01T22:00');
    await user.click(screen.getByRole('button', { name: 'Queue reanalysis' }));
    await waitFor(() =>
      expect(gw.calls.find((c) => c.url.pathname === '/api/v1/analysis/reanalyse')?.body).toEqual({
        monitorId: 'm1',
        from: new Date('2026-12-01T20:00').toISOString(),
        to: new Date('2026-12-01T22:00').toISOString(),
      }),
    );
    expect((await screen.findByRole('status')).textContent).toContain('1 window queued for engine 2.0.0');
    const table = await screen.findByRole('region', { name: 'Results side by side' });
    expect(within(table).getByText('waiting for the engine…')).toBeTruthy();
    analysed = true;
    await waitFor(() => expect(within(table).getByText('verdict valid → questionable')).toBeTruthy(), { timeout: 5000 });
    expect(within(table).getByRole('link', { name: 'Assessment by engine 1.1.0: valid' }).getAttribute('href')).toBe('/assessments/old');
    expect(within(table).getByRole('link', { name: 'Assessment by engine 2.0.0: questionable' }).getAttribute('href')).toBe('/assessments/new');
  }, 10_000);

  it('refuses a span without an end, and a bed without a monitor, before asking the gateway', async () => {
    const gw = gateway(() => false);
    const user = userEvent.setup();
    renderApp(<ReanalyseRoute />, { route: '/reanalyse' });
    await screen.findByRole('option', { name: 'ICU bed 1 · ICU' });
    await user.click(screen.getByRole('button', { name: 'Queue reanalysis' }));
    expect((await screen.findByRole('alert')).textContent).toBe('Choose a bed.');
    await user.selectOptions(screen.getByLabelText('Bed'), 'b1');
    await user.click(screen.getByRole('button', { name: 'Queue reanalysis' }));
    expect((await screen.findByRole('alert')).textContent).toBe('Give the start and end of the span.');
    await user.click(screen.getByRole('radio', { name: 'Everything since a time' }));
    await user.type(screen.getByLabelText('Since'), '2026-12-01T20:00');
    await user.click(screen.getByRole('button', { name: 'Queue reanalysis' }));
    await waitFor(() =>
      expect(gw.calls.find((c) => c.url.pathname === '/api/v1/analysis/reanalyse')?.body).toEqual({ from: new Date('2026-12-01T20:00').toISOString() }),
    );
  });

  it('reanalyses one assessment’s window from its page', async () => {
    const gw = gateway(
      () => true,
      (c) => (c.url.pathname === '/api/v1/assessments/old' ? { body: { assessment: run('old', '1.1.0', 'valid', 11.2, '2026-12-01T21:00:11Z') } } : undefined),
    );
    const user = userEvent.setup();
    renderApp(<ReanalyseRoute />, { route: '/reanalyse?assessment=old' });
    await user.click(await screen.findByRole('button', { name: 'Queue reanalysis' }));
    await waitFor(() =>
      expect(gw.calls.find((c) => c.url.pathname === '/api/v1/analysis/reanalyse')?.body).toEqual({
        monitorId: 'm1',
        from: '2026-12-01T21:00:00.000Z',
        to: '2026-12-01T21:00:00.001Z',
      }),
    );
    await screen.findByText('verdict valid → questionable');
  });
});
