import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Route, Routes } from 'react-router-dom';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
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
});
