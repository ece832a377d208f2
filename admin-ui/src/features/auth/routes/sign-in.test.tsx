import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Route, Routes } from 'react-router-dom';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { retryAfterSeconds } from '@/lib/api-client';
import { formatWait } from '@/lib/format';
import { SignInRoute } from './sign-in';

afterEach(() => vi.unstubAllGlobals());

function app() {
  return (
    <Routes>
      <Route path="/sign-in" element={<SignInRoute />} />
      <Route path="/" element={<p>home screen</p>} />
    </Routes>
  );
}

describe('sign-in form', () => {
  it('shows inline errors from the shared signInSchema and sends nothing when fields are empty', async () => {
    const gw = fakeGateway((c) =>
      c.url.pathname === '/api/v1/auth/session' ? { status: 401, body: { type: 'about:blank', title: 'Unauthorized', status: 401 } } : undefined,
    );
    renderApp(app(), { route: '/sign-in' });
    await userEvent.click(await screen.findByRole('button', { name: 'Sign in' }));
    expect(await screen.findAllByRole('alert')).toHaveLength(2);
    expect(screen.getByLabelText('User name').getAttribute('aria-invalid')).toBe('true');
    expect(gw.calls.filter((c) => c.url.pathname.endsWith('/sign-in'))).toHaveLength(0);
  });

  it('explains a 401 answer (problem details) without revealing which field was wrong', async () => {
    fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { status: 401, body: { type: 'about:blank', title: 'Unauthorized', status: 401 } };
      if (c.url.pathname === '/api/v1/auth/sign-in') return { status: 401, body: { type: 'about:blank', title: 'Unauthorized', status: 401 } };
      return undefined;
    });
    renderApp(app(), { route: '/sign-in' });
    await userEvent.type(await screen.findByLabelText('User name'), 'someone');
    await userEvent.type(screen.getByLabelText('Password'), 'wrong-password-1');
    await userEvent.click(screen.getByRole('button', { name: 'Sign in' }));
    expect(await screen.findByText('User name or password not recognised.')).toBeTruthy();
  });

  it('posts the credentials and goes to the next page on success', async () => {
    let signedIn = false;
    const gw = fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session')
        return signedIn ? { body: SESSION(['reviewer']) } : { status: 401, body: { type: 'about:blank', title: 'Unauthorized', status: 401 } };
      if (c.url.pathname === '/api/v1/auth/sign-in') {
        signedIn = true;
        return { body: SESSION(['reviewer']) };
      }
      return undefined;
    });
    renderApp(app(), { route: '/sign-in' });
    await userEvent.type(await screen.findByLabelText('User name'), 'test.user');
    await userEvent.type(screen.getByLabelText('Password'), 'long-enough-password-1');
    await userEvent.click(screen.getByRole('button', { name: 'Sign in' }));
    await waitFor(() => expect(screen.getByText('home screen')).toBeTruthy());
    const post = gw.calls.find((c) => c.url.pathname === '/api/v1/auth/sign-in');
    expect(post?.method).toBe('POST');
    expect(post?.body).toEqual({ username: 'test.user', password: 'long-enough-password-1' });
  });

  it('says how long to wait when the gateway slows sign-ins down (429 with Retry-After), in words, and speaks of no lock', async () => {
    let wait = '120';
    const gw = fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { status: 401, body: { type: 'about:blank', title: 'Unauthorized', status: 401 } };
      if (c.url.pathname === '/api/v1/auth/sign-in')
        return {
          status: 429,
          headers: { 'Retry-After': wait },
          // The gateway's own wording (auth.service.ts); the console takes the wait from the header.
          body: { type: 'about:blank', title: 'Too many sign-in attempts', status: 429, detail: `try again in ${wait} s.` },
        };
      return undefined;
    });
    const user = userEvent.setup();
    renderApp(app(), { route: '/sign-in' });
    await user.type(await screen.findByLabelText('User name'), 'someone');
    await user.type(screen.getByLabelText('Password'), 'wrong-password-1');
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    expect((await screen.findByRole('alert')).textContent).toBe('Too many attempts. Try again in 2 minutes.');
    // The wait grows with each refused try; the message follows the newest answer.
    wait = '5400';
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    await waitFor(() => expect(screen.getByRole('alert').textContent).toBe('Too many attempts. Try again in 1 hour 30 minutes.'));
    expect(gw.calls.filter((c) => c.url.pathname === '/api/v1/auth/sign-in')).toHaveLength(2);
    expect(document.body.textContent).not.toMatch(/locked/i);
  });

  it('falls back to a plain sentence when a 429 carries no Retry-After', async () => {
    fakeGateway((c) => {
      if (c.url.pathname === '/api/v1/auth/session') return { status: 401, body: { type: 'about:blank', title: 'Unauthorized', status: 401 } };
      if (c.url.pathname === '/api/v1/auth/sign-in') return { status: 429, body: { type: 'about:blank', title: 'Too many requests', status: 429 } };
      return undefined;
    });
    renderApp(app(), { route: '/sign-in' });
    await userEvent.type(await screen.findByLabelText('User name'), 'someone');
    await userEvent.type(screen.getByLabelText('Password'), 'wrong-password-1');
    await userEvent.click(screen.getByRole('button', { name: 'Sign in' }));
    expect((await screen.findByRole('alert')).textContent).toBe('Too many attempts. Wait a little and try again.');
  });
});

describe('the wait in words', () => {
  // Retry-After is delay-seconds or an HTTP date (RFC 9110 §10.2.3); both become seconds from now.
  it('reads both forms of Retry-After', () => {
    const now = Date.UTC(2026, 11, 2, 7, 0, 0);
    expect(retryAfterSeconds('90', now)).toBe(90);
    expect(retryAfterSeconds('Wed, 02 Dec 2026 07:02:00 GMT', now)).toBe(120);
    expect(retryAfterSeconds('Wed, 02 Dec 2026 06:59:00 GMT', now)).toBe(0);
    expect(retryAfterSeconds('soon', now)).toBeUndefined();
    expect(retryAfterSeconds(null, now)).toBeUndefined();
  });

  it('rounds up, so nobody is told to try before the gateway lets them', () => {
    expect(formatWait(1)).toBe('1 second');
    expect(formatWait(45)).toBe('45 seconds');
    expect(formatWait(60)).toBe('1 minute');
    expect(formatWait(61)).toBe('2 minutes');
    expect(formatWait(3600)).toBe('1 hour');
    expect(formatWait(3601)).toBe('1 hour 1 minute');
    expect(formatWait(2 * 3600 + 5 * 60)).toBe('2 hours 5 minutes');
  });
});
