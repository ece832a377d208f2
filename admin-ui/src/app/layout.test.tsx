import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, within } from '@testing-library/react';
import { Route, Routes } from 'react-router-dom';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { AppLayout } from './layout';
import { RequireSession } from './guards';

afterEach(() => vi.unstubAllGlobals());

async function navFor(roles: string[]) {
  fakeGateway((c) => (c.url.pathname === '/api/v1/auth/session' ? { body: SESSION(roles) } : undefined));
  renderApp(
    <Routes>
      <Route
        element={
          <RequireSession>
            <AppLayout />
          </RequireSession>
        }
      >
        <Route path="/" element={<p>x</p>} />
      </Route>
    </Routes>,
  );
  const nav = await screen.findByRole('navigation', { name: 'Main' });
  return within(nav)
    .getAllByRole('link')
    .map((a) => a.textContent);
}

describe('navigation by role', () => {
  it('an operator sees deliveries and inbound but not users, test bench or devices', async () => {
    const links = await navFor(['operator']);
    expect(links).toContain('Deliveries');
    expect(links).toContain('Inbound & quarantine');
    expect(links).not.toContain('Users & roles');
    expect(links).not.toContain('Test bench');
    expect(links).not.toContain('Monitors');
  });

  it('an integrator sees the test bench and devices, not users or audit', async () => {
    const links = await navFor(['integrator']);
    expect(links).toEqual(expect.arrayContaining(['Test bench', 'Monitors', 'Monitor profiles', 'Beds']));
    expect(links).not.toContain('Audit log');
  });

  it('an admin sees users, audit and settings; the header shows the roles', async () => {
    const links = await navFor(['admin']);
    expect(links).toEqual(expect.arrayContaining(['Users & roles', 'Audit log', 'Settings']));
    expect(within(screen.getByLabelText('Roles')).getByText('admin')).toBeTruthy();
    expect(screen.getByTestId('current-user').textContent).toBe('Test User');
  });
});
