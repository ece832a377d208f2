import type { ReactElement } from 'react';
import { render } from '@testing-library/react';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { MemoryRouter } from 'react-router-dom';
import { vi } from 'vitest';
import { ToastProvider } from '@/components/ui/toast';
import { AuthProvider } from '@/lib/auth';

export interface FakeCall {
  method: string;
  url: URL;
  body: unknown;
  headers: Record<string, string>;
}
type Handler = (call: FakeCall) => { status?: number; body?: unknown; headers?: Record<string, string> } | undefined;

/**
 * Replaces fetch with a scripted gateway: each request goes to `handler`, and every call is
 * recorded so a test can check what the console asked for (paging, sorting, CSRF header).
 */
export function fakeGateway(handler: Handler) {
  const calls: FakeCall[] = [];
  const fetchMock = vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
    const url = new URL(String(input), 'http://console.test');
    const headers = (init?.headers ?? {}) as Record<string, string>;
    const raw = init?.body;
    const body = typeof raw === 'string' ? JSON.parse(raw) : raw;
    const call = { method: init?.method ?? 'GET', url, body, headers };
    calls.push(call);
    const answer = handler(call) ?? { status: 404, body: { type: 'about:blank', title: 'Not Found', status: 404 } };
    const status = answer.status ?? 200;
    if (status === 204) return new Response(null, { status, headers: answer.headers });
    const type = status >= 400 ? 'application/problem+json' : 'application/json';
    return new Response(JSON.stringify(answer.body ?? {}), { status, headers: { 'content-type': type, ...answer.headers } });
  });
  vi.stubGlobal('fetch', fetchMock);
  return { calls, fetchMock };
}

export const SESSION = (roles: string[]) => ({
  user: { id: 'u1', username: 'test.user', displayName: 'Test User', roles },
  csrfToken: 'csrf-test-token',
  expiresAt: new Date(Date.now() + 15 * 60_000).toISOString(),
});

export function renderApp(ui: ReactElement, { route = '/' }: { route?: string } = {}) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false }, mutations: { retry: false } } });
  return render(
    <QueryClientProvider client={client}>
      <ToastProvider>
        <AuthProvider>
          <MemoryRouter initialEntries={[route]}>{ui}</MemoryRouter>
        </AuthProvider>
      </ToastProvider>
    </QueryClientProvider>,
  );
}
