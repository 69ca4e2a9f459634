// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { MemberRole } from '@shared/permissions';
import type { BlindingLog } from '@shared/schemas/review';
import type { ApprovalChecklist } from '@shared/schemas/approval';
import { OverviewRoute } from '../../src/app/routes/analysis/overview';
import { overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { blindingLog } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const requested: BlindingLog = blindingLog({
  state: 'unblinding_requested',
  events: [{ id: 1, action: 'requested', note: 'The control-region fits are reviewed.', by: 'Otto Brannholm', at: '2026-03-05T09:00:00Z', checklist: null }],
});

const CHECKLIST: ApprovalChecklist = {
  version: 1,
  ready: false,
  computedAt: '2026-03-05T09:00:00Z',
  items: [
    { key: 'entries-accepted', label: 'Every active register entry is accepted', ok: false, detail: '1 of 12 active entries are not accepted.', open: ['jes: submitted for review'] },
    { key: 'control-fit', label: 'A converged fit of the control regions to their data, on the newest version', ok: true, detail: 'Fit #3 of version 1.', open: [] },
  ],
};

function serve(role: MemberRole, log: BlindingLog, post?: (url: string, body: unknown) => Response | undefined) {
  return stubServer((method, url, body) => {
    if (url === '/api/auth/me') return json(200, { user: { id: 1, email: 'a@x', name: 'A', isAdmin: false }, memberships: [] });
    if (url === '/api/analyses/demo') return json(200, overview(role, log.state));
    if (url === '/api/analyses/demo/blinding' && method === 'GET') return json(200, log);
    if (url === '/api/analyses/demo/blinding/checklist') return json(200, CHECKLIST);
    if (method === 'POST') return post?.(url, body);
    return undefined;
  });
}

const open = () => renderWithApp(<OverviewRoute />, '/a/demo', '/a/:slug');

describe('blinding on the overview', () => {
  it('says plainly that the server never sends signal-region observed counts while blinded, and shows the log', async () => {
    serve('reader', requested);
    open();
    expect(await screen.findByRole('heading', { name: 'Unblinding has been requested' })).toBeTruthy();
    expect(screen.getByText(/the server still never sends the signal regions’ observed counts/)).toBeTruthy();
    const log = await screen.findByRole('list', { name: 'Blinding log' });
    expect(within(log).getByText('Otto Brannholm')).toBeTruthy();
    expect(within(log).getByText('The control-region fits are reviewed.')).toBeTruthy();
    expect(screen.queryByRole('button', { name: /Approve|Decline|Request unblinding/ })).toBeNull();
  });

  it('lets an analyst request unblinding with a note, and shows the new state', async () => {
    const user = userEvent.setup();
    const calls = serve('analyst', blindingLog(), (url, body) =>
      url === '/api/analyses/demo/blinding/request' ? json(200, { state: 'unblinding_requested', events: [{ id: 1, action: 'requested', note: (body as { note: string }).note, by: 'A', at: '2026-03-05T09:00:00Z' }] }) : undefined,
    );
    open();
    expect(await screen.findByText(/While it is blinded, the server never sends the signal regions’ observed counts/)).toBeTruthy();
    const form = await screen.findByRole('form', { name: 'Request unblinding' });
    await user.type(within(form).getByLabelText('Why the analysis is ready to unblind'), 'All control-region checks are done.');
    await user.click(within(form).getByRole('button', { name: 'Request unblinding' }));
    expect(await screen.findByRole('heading', { name: 'Unblinding has been requested' })).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST')).toMatchObject({ url: '/api/analyses/demo/blinding/request', body: { note: 'All control-region checks are done.' } });
  });

  it('shows the server’s refusal of a request next to its field', async () => {
    const user = userEvent.setup();
    serve('analyst', blindingLog(), () =>
      json(400, { error: { message: 'The request is not valid.', issues: [{ path: ['note'], message: 'Say in at least 10 characters why the analysis is ready to unblind.' }] } }),
    );
    open();
    const form = await screen.findByRole('form', { name: 'Request unblinding' });
    await user.type(within(form).getByLabelText('Why the analysis is ready to unblind'), 'ready');
    await user.click(within(form).getByRole('button', { name: 'Request unblinding' }));
    expect(await screen.findByText('Say in at least 10 characters why the analysis is ready to unblind.')).toBeTruthy();
    expect(screen.getByRole('alert').textContent).toContain('The request is not valid.');
  });

  it('lets a convener approve, sending approve: true with the note', async () => {
    const user = userEvent.setup();
    const calls = serve('convener', requested, (url) => (url === '/api/analyses/demo/blinding/decision' ? json(200, { state: 'unblinded', events: requested.events }) : undefined));
    open();
    const form = await screen.findByRole('form', { name: 'Decide on unblinding' });
    await user.click(within(form).getByRole('button', { name: 'Approve unblinding' }));
    expect(await screen.findByRole('heading', { name: 'This analysis is unblinded' })).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ approve: true, note: '' });
  });

  it('asks for a note before a decline, then sends approve: false with it, and shows a server error', async () => {
    const user = userEvent.setup();
    const calls = serve('convener', requested, () => json(409, { error: { message: 'The request was already decided by another convener.', code: 'conflict' } }));
    open();
    const form = await screen.findByRole('form', { name: 'Decide on unblinding' });
    await user.click(within(form).getByRole('button', { name: 'Decline' }));
    expect(screen.getByText('Say why you decline, so the analysts know what to do next.')).toBeTruthy();
    expect(calls.filter((c) => c.method === 'POST')).toHaveLength(0);
    await user.type(within(form).getByLabelText('Note'), 'Validation region 2 first.');
    await user.click(within(form).getByRole('button', { name: 'Decline' }));
    expect(await screen.findByText('The request was already decided by another convener.')).toBeTruthy();
    await waitFor(() => expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ approve: false, note: 'Validation region 2 first.' }));
  });
});
