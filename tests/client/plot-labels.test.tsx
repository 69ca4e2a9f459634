// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { MemberRole } from '@shared/permissions';
import { OverviewRoute } from '../../src/app/routes/analysis/overview';
import { overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { blindingLog } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function serve(role: MemberRole, put?: (body: unknown) => Response) {
  return stubServer((method, url, body) => {
    if (url === '/api/auth/me') return json(200, { user: { id: 1, email: 'a@x', name: 'A', isAdmin: false }, memberships: [] });
    if (url === '/api/analyses/demo') return json(200, overview(role, 'unblinded'));
    if (url === '/api/analyses/demo/blinding') return json(200, blindingLog({ state: 'unblinded' }));
    if (url === '/api/analyses/demo/plot-labels' && method === 'PUT') return put?.(body);
    return undefined;
  });
}

const open = () => renderWithApp(<OverviewRoute />, '/a/demo', '/a/:slug');

describe('plot labels on the overview', () => {
  it('shows a reader the labels as the charts draw them, without a form', async () => {
    serve('reader');
    open();
    const preview = await screen.findByRole('img', { name: 'Plot labels as charts show them: LANTERN Internal · 38 fb⁻¹ · 9 TeV' });
    expect(preview.querySelector('text.plot-label')?.textContent).toBe('LANTERN Internal · 38 fb⁻¹ · 9 TeV');
    expect(screen.queryByRole('form', { name: 'Plot labels' })).toBeNull();
    expect(screen.getByText('A convener sets them.')).toBeTruthy();
  });

  it('lets a convener save them, and puts the server’s refusal beside its field', async () => {
    const user = userEvent.setup();
    let refuse = true;
    const calls = serve('convener', (body) =>
      refuse ? json(400, { error: { message: 'The request is not valid: energy: must be at most 40 characters.', issues: [{ path: ['energy'], message: 'must be at most 40 characters' }] } }) : json(200, body),
    );
    open();
    const form = await screen.findByRole('form', { name: 'Plot labels' });
    const status = within(form).getByLabelText('Status');
    await user.clear(status);
    await user.type(status, 'Preliminary');
    await user.click(within(form).getByRole('button', { name: 'Save plot labels' }));
    expect(await within(form).findByText('must be at most 40 characters')).toBeTruthy();
    expect(within(form).getByLabelText('Centre-of-mass energy').getAttribute('aria-invalid')).toBe('true');
    refuse = false;
    await user.click(within(form).getByRole('button', { name: 'Save plot labels' }));
    await waitFor(() => expect(within(form).getByRole('status').textContent).toMatch(/Saved/));
    const puts = calls.filter((c) => c.method === 'PUT');
    expect(puts.at(-1)?.body).toEqual({ experiment: 'LANTERN', status: 'Preliminary', luminosity: '38 fb⁻¹', energy: '9 TeV' });
  });

  it('checks a label before sending it', async () => {
    const user = userEvent.setup();
    const calls = serve('convener', (body) => json(200, body));
    open();
    const form = await screen.findByRole('form', { name: 'Plot labels' });
    await user.type(within(form).getByLabelText('Experiment'), '<b>');
    await user.click(within(form).getByRole('button', { name: 'Save plot labels' }));
    expect(await within(form).findByText(/without < or >/)).toBeTruthy();
    expect(calls.filter((c) => c.method === 'PUT')).toEqual([]);
  });
});
