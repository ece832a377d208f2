import { describe, expect, it, afterEach, vi } from 'vitest';
import { fireEvent, screen, waitFor } from '@testing-library/react';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { useAuth } from './auth';

afterEach(() => {
  vi.restoreAllMocks();
  vi.unstubAllGlobals();
});

function Who() {
  const { session, loading } = useAuth();
  return <p data-testid="who">{loading ? 'loading' : session ? `${session.user.username} until ${session.expiresAt}` : 'signed out'}</p>;
}

/** A session that ends in 61 s: the renewal (60 s ahead of expiry) is due within a second. */
const nearlyExpired = () => ({ ...SESSION(['reviewer']), expiresAt: new Date(Date.now() + 61_000).toISOString() });

describe('session renewal', () => {
  it('renews shortly before expiry for someone who is using the console, sending the CSRF token', async () => {
    const renewed = { ...SESSION(['reviewer']), csrfToken: 'csrf-renewed', expiresAt: new Date(Date.now() + 15 * 60_000).toISOString() };
    const gw = fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { body: nearlyExpired() };
      if (c.url.pathname === '/api/v1/auth/renew') return { body: renewed };
      return undefined;
    });
    renderApp(<Who />);
    await screen.findByText(/^test\.user until/);
    fireEvent.keyDown(window, { key: 'a' });
    await waitFor(() => expect(screen.getByTestId('who').textContent).toBe(`test.user until ${renewed.expiresAt}`), { timeout: 4_000 });
    const renew = gw.calls.find((c) => c.url.pathname === '/api/v1/auth/renew')!;
    expect(renew.method).toBe('POST');
    expect(renew.headers['X-CSRF-Token']).toBe('csrf-test-token');
  });

  it('lets an unattended session lapse instead of renewing it forever', async () => {
    const gw = fakeGateway((c) => (c.url.pathname === '/api/v1/auth/session' ? { body: nearlyExpired() } : undefined));
    renderApp(<Who />);
    await screen.findByText(/^test\.user until/);
    // Eleven minutes without a key press or click (the idle limit is ten).
    const now = Date.now();
    vi.spyOn(Date, 'now').mockReturnValue(now + 11 * 60_000);
    await waitFor(() => expect(screen.getByTestId('who').textContent).toBe('signed out'), { timeout: 4_000 });
    expect(gw.calls.some((c) => c.url.pathname === '/api/v1/auth/renew')).toBe(false);
  });
});
