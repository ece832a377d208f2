import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { fixtureWindow } from '@/test/analysis-fixture';
import { CAUTIONS } from '@/lib/analysis';
import { TestBenchRoute } from './test-bench';

afterEach(() => vi.unstubAllGlobals());

describe('test bench', () => {
  it('uploads the capture as multipart with the chosen profile and shows plot, indices, cycles and cautions', async () => {
    const { waveform, analysis } = fixtureWindow({ rejected: { 4: ['template-mismatch'] }, unusableCycles: { 0: ['partial'] } });
    const gw = fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['integrator']) };
      if (c.url.pathname === '/api/v1/profiles')
        return { body: { items: [{ id: 'p1', name: 'Bay monitor', manufacturer: 'Demo', model: 'M1' }], page: 1, pageSize: 500, total: 1 } };
      if (c.url.pathname === '/api/v1/analysis/preview') {
        return {
          body: {
            parseReport: {
              format: 'json-batch',
              channels: [{ code: 'ABP', role: 'abp', unit: 'mmHg', sampleRate: 125, samples: 3750 }],
              warnings: ['one warning'],
            },
            waveform,
            analysis,
          },
        };
      }
      return undefined;
    });
    renderApp(<TestBenchRoute />);
    // Cautions are visible before any value is.
    expect(screen.getByTestId('cautions').textContent).toContain(CAUTIONS[0]);
    await screen.findByRole('option', { name: /Bay monitor/ });
    await userEvent.selectOptions(screen.getByLabelText('Monitor profile'), 'p1');
    const file = new File(['{"monitorId":"x"}'], 'capture.json', { type: 'application/json' });
    await userEvent.upload(screen.getByLabelText('Capture file'), file);
    await userEvent.click(screen.getByRole('button', { name: 'Analyse capture' }));

    const indices = await screen.findByRole('table', { name: 'Indices' });
    expect(within(indices).getByText('PPV')).toBeTruthy();
    expect(within(indices).getByText('11.8')).toBeTruthy();
    expect(screen.getByRole('table', { name: 'Respiratory cycles' }).querySelectorAll('tbody tr')).toHaveLength(analysis.cycles.length);
    expect(document.querySelectorAll('[data-mark="beat-rejected"]')).toHaveLength(1);
    expect(document.querySelectorAll('[data-mark="cycle-unusable"]')).toHaveLength(1);
    expect(screen.getByTestId('cautions').textContent).toContain(analysis.cautions[0]);
    expect(screen.getByText('one warning')).toBeTruthy();

    const post = gw.calls.find((c) => c.url.pathname === '/api/v1/analysis/preview')!;
    expect(post.method).toBe('POST');
    const form = post.body as FormData;
    expect(form.get('profileId')).toBe('p1');
    expect((form.get('file') as File).name).toBe('capture.json');
    expect(post.headers['X-CSRF-Token']).toBe('csrf-test-token');
  });

  it('shows the problem details of a rejected capture, field by field', async () => {
    fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['integrator']) };
      if (c.url.pathname === '/api/v1/profiles') return { body: { items: [], page: 1, pageSize: 500, total: 0 } };
      if (c.url.pathname === '/api/v1/analysis/preview')
        return {
          status: 422,
          body: {
            type: 'urn:ebbgate:invalid-capture',
            title: 'Capture not readable',
            status: 422,
            detail: 'No channel with a sample rate',
            errors: [{ path: 'channels.0.sampleRate', message: 'Required' }],
          },
        };
      return undefined;
    });
    renderApp(<TestBenchRoute />);
    await userEvent.upload(screen.getByLabelText('Capture file'), new File(['x'], 'bad.csv', { type: 'text/csv' }));
    await userEvent.click(screen.getByRole('button', { name: 'Analyse capture' }));
    const alert = await screen.findByText('Capture not readable');
    expect(alert.parentElement!.textContent).toContain('channels.0.sampleRate');
  });
});
