import { describe, expect, it, afterEach, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fakeGateway, renderApp, SESSION, type FakeCall } from '@/test/render';
import { UsersRoute } from './users';

afterEach(() => vi.unstubAllGlobals());

function user(i: number) {
  return {
    id: `id-${i}`,
    username: `user.${i}`,
    displayName: `User ${i}`,
    roles: ['reviewer'],
    disabled: false,
    lockedUntil: null,
    lastSignInAt: null,
    createdAt: '2026-11-30T10:00:00Z',
  };
}

function gateway(total = 60) {
  return fakeGateway((c: FakeCall) => {
    if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['admin']) };
    if (c.url.pathname === '/api/v1/users' && c.method === 'GET') {
      const page = Number(c.url.searchParams.get('page'));
      const size = Number(c.url.searchParams.get('pageSize'));
      const items = Array.from({ length: Math.min(size, total - (page - 1) * size) }, (_, k) => user((page - 1) * size + k));
      return { body: { items, page, pageSize: size, total } };
    }
    if (c.url.pathname === '/api/v1/users' && c.method === 'POST') return { status: 201, body: { ...user(999), ...(c.body as object) } };
    return undefined;
  });
}

describe('users table', () => {
  it('asks the server for the next page and for a new sort order instead of slicing locally', async () => {
    const gw = gateway();
    renderApp(<UsersRoute />);
    expect(await screen.findByText('1–25 of 60')).toBeTruthy();
    await userEvent.click(screen.getByRole('button', { name: /Next/ }));
    await screen.findByText('26–50 of 60');
    const lastList = () => gw.calls.filter((c) => c.url.pathname === '/api/v1/users').at(-1)!.url.searchParams;
    expect(lastList().get('page')).toBe('2');
    expect(lastList().get('sort')).toBe('username');
    expect(lastList().get('order')).toBe('asc');

    await userEvent.click(screen.getByRole('button', { name: /Last sign-in/ }));
    await waitFor(() => expect(lastList().get('sort')).toBe('lastSignInAt'));
    expect(lastList().get('order')).toBe('desc');
    // A new sort goes back to the first page.
    expect(lastList().get('page')).toBe('1');
  });
});

describe('create user form', () => {
  it('shows the shared schema errors inline (username pattern, password policy, roles) and posts nothing', async () => {
    const gw = gateway(1);
    renderApp(<UsersRoute />);
    await userEvent.click(await screen.findByRole('button', { name: 'New user' }));
    const dialog = screen.getByRole('dialog', { name: 'New user' });
    await userEvent.type(within(dialog).getByLabelText('User name'), 'Bad Name');
    await userEvent.type(within(dialog).getByLabelText('Display name'), 'Someone');
    await userEvent.type(within(dialog).getByLabelText('Initial password'), 'short');
    await userEvent.click(within(dialog).getByRole('button', { name: 'Create user' }));
    expect(await within(dialog).findByText('lower-case letters, digits, dot, dash and underscore only')).toBeTruthy();
    expect(within(dialog).getByText('at least 12 characters')).toBeTruthy();
    expect(within(dialog).getByLabelText('Initial password').getAttribute('aria-invalid')).toBe('true');
    expect(gw.calls.some((c) => c.method === 'POST' && c.url.pathname === '/api/v1/users')).toBe(false);
  });

  it('posts a valid user with the CSRF header and closes on success', async () => {
    const gw = gateway(1);
    renderApp(<UsersRoute />);
    await userEvent.click(await screen.findByRole('button', { name: 'New user' }));
    const dialog = screen.getByRole('dialog', { name: 'New user' });
    await userEvent.type(within(dialog).getByLabelText('User name'), 'new.person');
    await userEvent.type(within(dialog).getByLabelText('Display name'), 'New Person');
    await userEvent.type(within(dialog).getByLabelText('Initial password'), 'correct-horse-42');
    await userEvent.click(within(dialog).getByLabelText('operator'));
    await userEvent.click(within(dialog).getByRole('button', { name: 'Create user' }));
    await waitFor(() => expect(screen.queryByRole('dialog')).toBeNull());
    const post = gw.calls.find((c) => c.method === 'POST' && c.url.pathname === '/api/v1/users')!;
    expect(post.body).toEqual({ username: 'new.person', displayName: 'New Person', password: 'correct-horse-42', roles: ['operator'] });
    expect(post.headers['X-CSRF-Token']).toBe('csrf-test-token');
    expect(await screen.findByText('User new.person created')).toBeTruthy();
  });
});
