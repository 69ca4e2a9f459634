// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider } from 'react-router';
import { AppProvider } from '../../src/app/provider';
import { routes } from '../../src/app/router';
import { resetCsrfToken } from '../../src/lib/api-client';
import { json, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

const nell = { user: { id: 9, email: 'nell@lantern.example', name: 'Nell Newcomer', isAdmin: false }, memberships: [{ slug: 'vireon-search', name: 'Vireon search', role: 'contact' }] };

describe('the invitation page', () => {
  it('shows what the link invites to, creates the account and opens the analysis', async () => {
    let signedIn = false;
    const calls = stubServer((method, url) => {
      if (url === '/api/auth/me') return signedIn ? json(200, nell) : json(401, { error: { message: 'Sign in to continue.' } });
      if (method === 'GET' && url === '/api/invitations/tok123')
        return json(200, { analysis: 'Vireon search', analysisSlug: 'vireon-search', email: 'nell@lantern.example', role: 'contact', invitedBy: 'Mira Quellbright' });
      if (method === 'POST' && url === '/api/invitations/tok123/accept') {
        signedIn = true;
        return json(200, nell);
      }
      if (url === '/api/analyses/vireon-search') return json(403, { error: { message: 'stop here' } });
    });
    const router = createMemoryRouter(routes, { initialEntries: ['/invite/tok123'] });
    render(
      <AppProvider>
        <RouterProvider router={router} />
      </AppProvider>,
    );
    await screen.findByText('Mira Quellbright');
    expect(screen.getByText('Systematics contact')).toBeTruthy();
    expect(screen.getByText('nell@lantern.example')).toBeTruthy();

    const user = userEvent.setup();
    await user.type(screen.getByLabelText('Your name'), 'Nell Newcomer');
    await user.type(screen.getByLabelText('Password'), 'short');
    await user.click(screen.getByRole('button', { name: 'Create account and join' }));
    expect(screen.getByText('must be at least 10 characters')).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);

    await user.clear(screen.getByLabelText('Password'));
    await user.type(screen.getByLabelText('Password'), 'a-long-passphrase');
    await user.type(screen.getByLabelText('Repeat the password'), 'a-long-passphrase');
    await user.click(screen.getByRole('button', { name: 'Create account and join' }));
    await vi.waitFor(() => expect(router.state.location.pathname).toBe('/a/vireon-search'));
    expect(calls.find((c) => c.url.endsWith('/accept'))!.body).toEqual({ name: 'Nell Newcomer', password: 'a-long-passphrase' });
  });

  it('says when the link is no longer valid', async () => {
    stubServer((_m, url) => {
      if (url === '/api/auth/me') return json(401, { error: { message: 'Sign in to continue.' } });
      if (url === '/api/invitations/old') return json(404, { error: { message: 'This invitation (it may have been used already) was not found.' } });
    });
    const router = createMemoryRouter(routes, { initialEntries: ['/invite/old'] });
    render(
      <AppProvider>
        <RouterProvider router={router} />
      </AppProvider>,
    );
    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toContain('may have been used already');
    expect(screen.getByRole('link', { name: 'Sign in to Plumbline' })).toBeTruthy();
  });
});
