import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Route, Routes } from 'react-router-dom';
import { fakeGateway, renderApp, SESSION, type FakeCall } from '@/test/render';
import { fixtureWindow } from '@/test/analysis-fixture';
import { CAUTIONS } from '@/lib/analysis';
import { AssessmentsRoute } from './assessments';
import { AssessmentDetailRoute } from './assessment-detail';

afterEach(() => vi.unstubAllGlobals());

const summary = (i: number) => ({
  id: `a${i}`,
  monitorId: 'm1',
  bedId: 'b1',
  patientRef: 'HGH-1001',
  patientName: i === 0 ? 'Maren Quillfeather' : null,
  patientMrn: i === 0 ? 'HGH-400117' : null,
  windowStart: '2026-12-01T21:00:00Z',
  windowEnd: '2026-12-01T21:01:00Z',
  verdict: i % 2 ? 'not-valid' : 'valid',
  ppv: 11.8,
  spv: 8,
  deltaPop: null,
  perfusionIndex: null,
  heartRate: 75,
  respiratoryRate: 15,
  flags: ['tidal-volume-unknown'],
  engineVersion: '1.0.0',
  deliveryStatus: 'delivered',
  enteredInError: false,
  createdAt: '2026-12-01T21:01:01Z',
});

function gateway(roles: string[], extra?: (c: FakeCall) => { status?: number; body?: unknown } | undefined) {
  return fakeGateway((c) => {
    if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(roles) };
    if (c.url.pathname === '/api/v1/beds')
      return {
        body: {
          items: [{ id: 'b1', name: 'Bed 4', unit: 'ICU East', locationIdentifier: 'L4', monitorId: 'm1', createdAt: '', updatedAt: '' }],
          page: 1,
          pageSize: 500,
          total: 1,
        },
      };
    if (c.url.pathname === '/api/v1/assessments') return { body: { items: [summary(0), summary(1)], page: 1, pageSize: 25, total: 2 } };
    return extra?.(c);
  });
}

describe('assessments list', () => {
  it('sends the filters to the server and shows the cautions above the values', async () => {
    const gw = gateway(['reviewer']);
    renderApp(<AssessmentsRoute />);
    // Named by the EHR: name and MRN; not yet named: the reference.
    expect((await screen.findByText('Maren Quillfeather')).closest('[data-testid="patient-label"]')!.textContent).toBe('Maren Quillfeather · MRN HGH-400117');
    expect(screen.getAllByText('HGH-1001')).toHaveLength(1);
    expect(screen.getByTestId('cautions').textContent).toContain(CAUTIONS[1]);
    await userEvent.selectOptions(screen.getByLabelText('Verdict'), 'questionable');
    await userEvent.selectOptions(screen.getByLabelText('Flag'), 'irregular-rhythm');
    await userEvent.selectOptions(screen.getByLabelText('Has index'), 'deltaPop');
    await userEvent.selectOptions(screen.getByLabelText('Bed'), 'b1');
    await waitFor(() => {
      const q = gw.calls.filter((c) => c.url.pathname === '/api/v1/assessments').at(-1)!.url.searchParams;
      expect(Object.fromEntries(q)).toMatchObject({ verdict: 'questionable', flag: 'irregular-rhythm', index: 'deltaPop', bed: 'b1', page: '1' });
    });
  });
});

describe('assessments list from a link', () => {
  it('applies the filters in the address, as the overview links them', async () => {
    const gw = gateway(['reviewer']);
    renderApp(
      <Routes>
        <Route path="/assessments" element={<AssessmentsRoute />} />
      </Routes>,
      { route: '/assessments?verdict=not-valid' },
    );
    await screen.findAllByText('HGH-1001');
    const q = gw.calls.filter((c) => c.url.pathname === '/api/v1/assessments').at(-1)!.url.searchParams;
    expect(q.get('verdict')).toBe('not-valid');
    expect((screen.getByLabelText('Verdict') as HTMLSelectElement).value).toBe('not-valid');
  });
});

describe('assessment detail', () => {
  function detailGateway(roles: string[]) {
    const { waveform, analysis } = fixtureWindow({ rejected: { 2: ['ectopic'] } });
    return gateway(roles, (c) => {
      if (c.url.pathname === '/api/v1/assessments/a1' && c.method === 'GET') {
        return {
          body: {
            assessment: {
              ...summary(1),
              verdict: 'questionable',
              enteredInErrorAt: null,
              enteredInErrorBy: null,
              enteredInErrorReason: null,
              result: analysis,
            },
            waveform,
            observations: [
              {
                index: 'ppv',
                resource: { resourceType: 'Observation', status: 'preliminary' },
                deliveries: [
                  {
                    id: 'd1',
                    assessmentId: 'a1',
                    destinationId: 'ehr-fhir',
                    index: 'ppv',
                    kind: 'create',
                    status: 'delivered',
                    identifier: 'a1-ppv',
                    serverId: 'obs-1',
                    patientRef: 'Patient/p1',
                    tries: 1,
                    attemptCount: 1,
                    nextAttemptAt: '2026-12-01T21:01:02Z',
                    lastHttpStatus: 201,
                    lastError: null,
                    discardReason: null,
                    createdAt: '2026-12-01T21:01:01Z',
                    updatedAt: '2026-12-01T21:01:02Z',
                    deliveredAt: '2026-12-01T21:01:02Z',
                  },
                ],
              },
            ],
          },
        };
      }
      if (c.url.pathname === '/api/v1/assessments/a1/mark-in-error') return { body: {} };
      return undefined;
    });
  }
  const app = (
    <Routes>
      <Route path="/assessments/:id" element={<AssessmentDetailRoute />} />
    </Routes>
  );

  it('shows plot marks, the FHIR resource, delivery history and cautions', async () => {
    detailGateway(['operator']);
    renderApp(app, { route: '/assessments/a1' });
    expect(await screen.findByLabelText('FHIR resource for ppv')).toBeTruthy();
    expect(document.querySelectorAll('[data-mark="beat-rejected"]')).toHaveLength(1);
    expect(within(screen.getByRole('table', { name: 'Deliveries of ppv' })).getByText('201')).toBeTruthy();
    // An operator may open the deliveries list for every attempt.
    expect(screen.getByRole('link', { name: /Every attempt/ }).getAttribute('href')).toBe('/deliveries?assessment=a1');
    expect(screen.getByTestId('cautions')).toBeTruthy();
    // Only reviewers may mark in error.
    expect(screen.queryByRole('button', { name: /Mark in error/ })).toBeNull();
  });

  it('a reviewer must give a reason before the mark-in-error request is sent', async () => {
    const gw = detailGateway(['reviewer']);
    renderApp(app, { route: '/assessments/a1' });
    await userEvent.click(await screen.findByRole('button', { name: 'Mark in error…' }));
    const dialog = screen.getByRole('dialog', { name: 'Mark assessment in error' });
    await userEvent.click(within(dialog).getByRole('button', { name: 'Mark in error' }));
    expect(within(dialog).getByText('Give a reason (at least 3 characters)')).toBeTruthy();
    expect(gw.calls.some((c) => c.url.pathname.endsWith('/mark-in-error'))).toBe(false);
    await userEvent.type(within(dialog).getByLabelText(/Reason/), 'Wrong patient on the bed');
    await userEvent.click(within(dialog).getByRole('button', { name: 'Mark in error' }));
    await waitFor(() => expect(gw.calls.find((c) => c.url.pathname.endsWith('/mark-in-error'))?.body).toEqual({ reason: 'Wrong patient on the bed' }));
  });
});
