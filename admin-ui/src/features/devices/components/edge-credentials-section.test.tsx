import { afterEach, describe, expect, it, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Route, Routes } from 'react-router-dom';
import { rolesWith } from '@ebbgate/shared';
import { fakeGateway, renderApp, SESSION, type FakeCall } from '@/test/render';
import { MonitorsRoute } from '../routes/monitors';
import { ProfileEditRoute } from '../routes/profile-edit';

afterEach(() => vi.unstubAllGlobals());

// A SHA-256 is 32 bytes: 64 hex digits (FIPS 180-4). Invented demo values below.
const FINGERPRINT = '3f'.repeat(32);
const credential = (id: string, kind: string, value: string, scope: string, scopeId: string, note: string | null = null) => ({
  id,
  scope,
  scopeId,
  kind,
  value,
  note,
  createdAt: '2026-12-01T20:00:00Z',
  createdBy: 'ingrid.integrator',
});
const monitor = {
  id: 'm1',
  identifier: '0EBB000000000001',
  profileId: 'p1',
  bedId: null,
  enabled: true,
  lastSeenAt: null,
  dataRate: null,
  hasApiKey: false,
  createdAt: '2026-12-01T20:00:00Z',
  updatedAt: '2026-12-01T20:00:00Z',
};
const profile = {
  id: 'p1',
  name: 'Bay monitor',
  manufacturer: 'Harrowmere Clinical Engineering',
  model: 'Bay bedside',
  transports: ['mllp'],
  plethScaling: 'raw',
  defaultProbeSite: null,
  notes: null,
  channels: [{ code: 'MDC_PRESS_BLD_ART_ABP', role: 'abp', unit: 'mmHg', gain: 1, offset: 0, sampleRate: 125 }],
  createdAt: '2026-12-01T20:00:00Z',
  updatedAt: '2026-12-01T20:00:00Z',
};

function gateway(roles: string[], stored: Record<string, ReturnType<typeof credential>[]>) {
  return fakeGateway((c: FakeCall) => {
    const p = c.url.pathname;
    if (p === '/api/v1/auth/session') return { body: SESSION(roles) };
    if (p === '/api/v1/profiles') return { body: { items: [profile], page: 1, pageSize: 500, total: 1 } };
    if (p === '/api/v1/profiles/p1') return { body: profile };
    if (p === '/api/v1/beds') return { body: { items: [], page: 1, pageSize: 500, total: 0 } };
    if (p === '/api/v1/monitors') return { body: { items: [monitor], page: 1, pageSize: 25, total: 1 } };
    const m = /^\/api\/v1\/(monitors|profiles)\/(\w+)\/edge-credentials(?:\/(\w+))?$/.exec(p);
    if (m) {
      const key = `${m[1]}/${m[2]}`;
      const list = (stored[key] ??= []);
      if (c.method === 'GET') return { body: list };
      if (c.method === 'POST') {
        const b = c.body as { kind: string; value: string; note?: string };
        const made = credential(`c${list.length + 10}`, b.kind, b.value, m[1] === 'monitors' ? 'monitor' : 'profile', m[2]!, b.note ?? null);
        list.push(made);
        return { status: 201, body: made };
      }
      if (c.method === 'DELETE') {
        const at = list.findIndex((x) => x.id === m[3]);
        if (at < 0) return { status: 404, body: { type: 'about:blank', title: 'Not Found', status: 404 } };
        list.splice(at, 1);
        return { status: 204 };
      }
    }
    return undefined;
  });
}

const edgeCalls = (gw: ReturnType<typeof gateway>, method: string) =>
  gw.calls.filter((c) => c.method === method && c.url.pathname.includes('/edge-credentials'));

describe('device edge on the monitors page', () => {
  it("lists a monitor's certificates and sources, adds one through the shared schema and removes one", async () => {
    expect(rolesWith('monitors.keys')).toContain('integrator');
    const gw = gateway(['integrator'], {
      'monitors/m1': [
        credential('c1', 'certificate-fingerprint', FINGERPRINT, 'monitor', 'm1', 'bay 7 adapter'),
        credential('c2', 'source', '10.20.0.0/24', 'monitor', 'm1'),
      ],
    });
    renderApp(<MonitorsRoute />);
    await userEvent.click(await screen.findByRole('button', { name: 'Device edge of 0EBB000000000001' }));
    const section = await screen.findByTestId('device-edge');
    const rows = await within(section).findAllByTestId('edge-credential');
    expect(rows).toHaveLength(2);
    expect(rows[0]!.textContent).toContain('Client certificate (SHA-256 fingerprint)');
    expect(rows[0]!.textContent).toContain(FINGERPRINT);
    expect(rows[0]!.textContent).toContain('bay 7 adapter');
    expect(rows[1]!.textContent).toContain('Allowed source address or CIDR');
    expect(rows[1]!.textContent).toContain('10.20.0.0/24');
    expect(section.textContent).toContain('refuses plain MLLP');
    expect(edgeCalls(gw, 'GET')[0]!.url.pathname).toBe('/api/v1/monitors/m1/edge-credentials');

    // An empty value is refused by newEdgeCredentialSchema before anything is sent.
    await userEvent.click(within(section).getByRole('button', { name: 'Add credential' }));
    await waitFor(() => expect(within(section).getByLabelText('Value').getAttribute('aria-invalid')).toBe('true'));
    expect(edgeCalls(gw, 'POST')).toHaveLength(0);

    await userEvent.selectOptions(within(section).getByLabelText('Kind'), 'source');
    await userEvent.type(within(section).getByLabelText('Value'), ' 192.168.40.12 ');
    await userEvent.click(within(section).getByRole('button', { name: 'Add credential' }));
    await waitFor(() => expect(edgeCalls(gw, 'POST')).toHaveLength(1));
    const post = edgeCalls(gw, 'POST')[0]!;
    expect(post.url.pathname).toBe('/api/v1/monitors/m1/edge-credentials');
    // Trimmed by the schema; an empty note is left out rather than sent as ''.
    expect(post.body).toEqual({ kind: 'source', value: '192.168.40.12' });
    await waitFor(() => expect(within(section).getAllByTestId('edge-credential')).toHaveLength(3));

    await userEvent.click(within(section).getByRole('button', { name: 'Remove 10.20.0.0/24' }));
    const confirm = await screen.findByRole('dialog', { name: 'Remove credential' });
    await userEvent.click(within(confirm).getByRole('button', { name: 'Remove' }));
    await waitFor(() => expect(edgeCalls(gw, 'DELETE')).toHaveLength(1));
    expect(edgeCalls(gw, 'DELETE')[0]!.url.pathname).toBe('/api/v1/monitors/m1/edge-credentials/c2');
    await waitFor(() => expect(within(section).getAllByTestId('edge-credential')).toHaveLength(2));
    expect(
      within(section)
        .getAllByTestId('edge-credential')
        .map((r) => r.textContent)
        .join('|'),
    ).not.toContain('10.20.0.0/24');
  });

  it('is not offered to a role without monitors.keys, and nothing is asked for', async () => {
    expect(rolesWith('monitors.keys')).not.toContain('admin');
    const gw = gateway(['admin'], {});
    renderApp(<MonitorsRoute />);
    expect(await screen.findByText('0EBB000000000001')).toBeTruthy();
    expect(screen.queryByRole('button', { name: /Device edge/ })).toBeNull();
    expect(edgeCalls(gw, 'GET')).toHaveLength(0);
  });
});

describe('device edge on the profile page', () => {
  const renderProfile = () =>
    renderApp(
      <Routes>
        <Route path="/profiles/:id" element={<ProfileEditRoute />} />
      </Routes>,
      { route: '/profiles/p1' },
    );

  it('adds a certificate subject with a note to the profile', async () => {
    const gw = gateway(['integrator'], {});
    renderProfile();
    const panel = await screen.findByRole('region', { name: 'Device edge' });
    expect(await within(panel).findByText('No device edge credentials registered here')).toBeTruthy();
    expect(panel.textContent).toContain('every monitor of this profile');
    await userEvent.selectOptions(within(panel).getByLabelText('Kind'), 'certificate-subject');
    await userEvent.type(within(panel).getByLabelText('Value'), 'CN=bay-07.icu.harrowmere.example');
    await userEvent.type(within(panel).getByLabelText('Note (optional)'), 'ICU adapter');
    await userEvent.click(within(panel).getByRole('button', { name: 'Add credential' }));
    await waitFor(() => expect(edgeCalls(gw, 'POST')).toHaveLength(1));
    const post = edgeCalls(gw, 'POST')[0]!;
    expect(post.url.pathname).toBe('/api/v1/profiles/p1/edge-credentials');
    expect(post.body).toEqual({ kind: 'certificate-subject', value: 'CN=bay-07.icu.harrowmere.example', note: 'ICU adapter' });
    const row = await within(panel).findByTestId('edge-credential');
    expect(row.textContent).toContain('Client certificate (subject or common name)');
    expect(row.textContent).toContain('ICU adapter');
  });

  it("shows the gateway's field error next to the value when it refuses a fingerprint", async () => {
    const gw = fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['integrator']) };
      if (c.url.pathname === '/api/v1/profiles/p1') return { body: profile };
      if (c.url.pathname === '/api/v1/profiles/p1/edge-credentials' && c.method === 'GET') return { body: [] };
      if (c.url.pathname === '/api/v1/profiles/p1/edge-credentials' && c.method === 'POST') {
        return {
          status: 400,
          body: {
            type: 'about:blank',
            title: 'Bad Request',
            status: 400,
            detail: 'A certificate fingerprint is the SHA-256 of the certificate: 64 hex digits (colons allowed).',
            errors: [{ path: 'value', message: 'not a SHA-256 fingerprint' }],
          },
        };
      }
      return undefined;
    });
    renderProfile();
    const panel = await screen.findByRole('region', { name: 'Device edge' });
    await userEvent.type(within(panel).getByLabelText('Value'), 'AB:CD');
    await userEvent.click(within(panel).getByRole('button', { name: 'Add credential' }));
    await waitFor(() => expect(gw.calls.filter((c) => c.method === 'POST')).toHaveLength(1));
    expect(await within(panel).findByText('not a SHA-256 fingerprint')).toBeTruthy();
    expect(within(panel).getByLabelText('Value').getAttribute('aria-invalid')).toBe('true');
  });

  it('is hidden from an operator', async () => {
    const gw = gateway(['operator'], {});
    renderProfile();
    expect(await screen.findByText('Profile Bay monitor')).toBeTruthy();
    expect(screen.queryByRole('region', { name: 'Device edge' })).toBeNull();
    expect(edgeCalls(gw, 'GET')).toHaveLength(0);
  });
});
