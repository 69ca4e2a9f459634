// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider } from 'react-router';
import type { Me } from '@shared/schemas/api';
import { AppProvider } from '../../src/app/provider';
import { routes } from '../../src/app/router';
import { resetCsrfToken } from '../../src/lib/api-client';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

const mira: Me = {
  user: { id: 2, email: 'mira@lantern.example', name: 'Mira Quellbright', isAdmin: false },
  memberships: [{ slug: 'demo', name: 'Demo analysis', role: 'reader' }],
};

function json(status: number, body: unknown) {
  return new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json' } });
}

function renderAt(path: string, handler: (method: string, url: string) => Response) {
  vi.stubGlobal(
    'fetch',
    vi.fn(async (url: string, init: RequestInit = {}) => handler(init.method ?? 'GET', url)),
  );
  const router = createMemoryRouter(routes, { initialEntries: [path] });
  render(
    <AppProvider>
      <RouterProvider router={router} />
    </AppProvider>,
  );
  return router;
}

describe('the app shell', () => {
  it('sends a signed-out reader to sign-in and back to where they were going', async () => {
    let signedIn = false;
    const router = renderAt('/admin/outbox', (method, url) => {
      if (url === '/api/auth/me') return signedIn ? json(200, { ...mira, user: { ...mira.user, isAdmin: true } }) : json(401, { error: { message: 'Sign in first.' } });
      if (url === '/api/auth/csrf') return json(200, { token: 't' });
      if (method === 'POST' && url === '/api/auth/sign-in') {
        signedIn = true;
        return json(200, { ...mira, user: { ...mira.user, isAdmin: true } });
      }
      if (url === '/api/outbox') return json(200, []);
      return json(404, { error: { message: 'Not found.' } });
    });

    await screen.findByRole('heading', { name: 'Sign in' });
    expect(router.state.location.pathname).toBe('/sign-in');
    expect(router.state.location.search).toBe(`?next=${encodeURIComponent('/admin/outbox')}`);

    const user = userEvent.setup();
    await user.type(screen.getByLabelText('E-mail'), 'mira@lantern.example');
    await user.type(screen.getByLabelText('Password'), 'lantern-demo-2026');
    await user.click(screen.getByRole('button', { name: 'Sign in' }));

    await screen.findByRole('heading', { name: 'The outbox is empty' });
    expect(router.state.location.pathname).toBe('/admin/outbox');
  });

  it('says plainly when the role does not allow a screen', async () => {
    renderAt('/a/demo', (_method, url) => {
      if (url === '/api/auth/me') return json(200, mira);
      if (url === '/api/analyses/demo') return json(403, { error: { message: 'Only members of this analysis may read it.', code: 'forbidden' } });
      return json(404, { error: { message: 'Not found.' } });
    });
    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toContain('Your role does not allow this');
    expect(alert.textContent).toContain('Only members of this analysis may read it.');
  });

  it('offers to try again when the server cannot be reached', async () => {
    vi.stubGlobal('fetch', vi.fn(async () => Promise.reject(new TypeError('Failed to fetch'))));
    const router = createMemoryRouter(routes, { initialEntries: ['/'] });
    render(
      <AppProvider>
        <RouterProvider router={router} />
      </AppProvider>,
    );
    const alert = await screen.findByRole('alert', {}, { timeout: 8000 });
    expect(alert.textContent).toContain('The server cannot be reached');
    expect(screen.getByRole('button', { name: 'Try again' })).toBeTruthy();
  });
});
