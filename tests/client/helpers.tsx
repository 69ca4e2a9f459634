import type { ReactNode } from 'react';
import { vi } from 'vitest';
import { render } from '@testing-library/react';
import { QueryClientProvider } from '@tanstack/react-query';
import { createMemoryRouter, RouterProvider } from 'react-router';
import { createQueryClient } from '../../src/lib/query-client';

export type Call = { method: string; url: string; body: unknown };

export function json(status: number, body?: unknown) {
  return new Response(body === undefined ? null : JSON.stringify(body), { status, headers: { 'content-type': 'application/json' } });
}

/** Stub fetch with a handler; every request is recorded (FormData bodies are kept as they are). */
export function stubServer(handler: (method: string, url: string, body: unknown) => Response | undefined) {
  const calls: Call[] = [];
  vi.stubGlobal(
    'fetch',
    vi.fn(async (url: string, init: RequestInit = {}) => {
      const method = init.method ?? 'GET';
      const body = init.body instanceof FormData ? init.body : typeof init.body === 'string' ? JSON.parse(init.body) : undefined;
      calls.push({ method, url, body });
      if (url === '/api/auth/csrf') return json(200, { token: 'tok' });
      return handler(method, url, body) ?? json(404, { error: { message: 'Not found.' } });
    }),
  );
  return calls;
}

/** Render an element inside a fresh query client and a memory router at `path`. */
export function renderWithApp(element: ReactNode, path = '/', routePath = '/') {
  const router = createMemoryRouter([{ path: routePath, element }, { path: '*', element: <p>elsewhere</p> }], { initialEntries: [path] });
  const queryClient = createQueryClient();
  const utils = render(
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return { ...utils, router, queryClient };
}
