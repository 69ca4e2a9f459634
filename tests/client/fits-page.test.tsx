// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { ModelVersion } from '@shared/schemas/fits';
import { FitsRoute } from '../../src/app/routes/analysis/fits';
import { fitSummary, overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const version: ModelVersion = {
  number: 2,
  note: 'after the calorimetry review',
  forApproval: false,
  sha256: 'ab'.repeat(32),
  createdAt: '2026-03-01T09:00:00Z',
  createdBy: 'Otto Brannholm',
  counts: { regions: 4, processes: 6, systematics: 40 },
  register: null,
  override: null,
};

function serve(role: 'analyst' | 'convener' | 'reader', blinding: 'blinded' | 'unblinded', fits = [fitSummary()]) {
  return stubServer((method, url) => {
    if (url === '/api/analyses/demo') return json(200, overview(role, blinding));
    if (url === '/api/analyses/demo/fits' && method === 'GET') return json(200, fits);
    if (url === '/api/analyses/demo/fits' && method === 'POST') return json(202, fitSummary({ id: 8, state: 'queued', progress: 0, headline: null }));
    if (url === '/api/analyses/demo/versions' && method === 'GET') return json(200, [version]);
    if (url === '/api/analyses/demo/versions' && method === 'POST') return json(201, { ...version, number: 3 });
    if (url === '/api/analyses/demo/fits/8') return json(200, { ...fitSummary({ id: 8, state: 'queued' }), result: null });
    return undefined;
  });
}

const render = () => renderWithApp(<FitsRoute />, '/a/demo/fits', '/a/:slug/fits');

describe('the fits page', () => {
  it('lists fits with their dataset in words, state and headline, and says results inform the review', async () => {
    serve('reader', 'unblinded', [fitSummary(), fitSummary({ id: 6, label: '', state: 'failed', failure: 'The Hessian is singular.', headline: null })]);
    render();
    const table = await screen.findByRole('table', { name: 'Fits' });
    const rows = within(table).getAllByRole('row').slice(1);
    expect(within(rows[0]).getByRole('link', { name: 'Observed, full impacts' }).getAttribute('href')).toBe('/a/demo/fits/7');
    expect(rows[0].textContent).toContain('observed data, all regions');
    expect(rows[0].textContent).toContain('μ̂ = 1.20 ± 0.30');
    expect(rows[0].textContent).toContain('Z = 4.00 σ');
    expect(rows[1].textContent).toContain('Failed');
    expect(rows[1].textContent).toContain('The Hessian is singular.');
    expect(screen.getByText(/inform the collaboration's statistical review and approval; they do not replace it/)).toBeTruthy();
    // a reader gets neither form
    expect(screen.queryByRole('form', { name: 'Run a fit' })).toBeNull();
    expect(screen.queryByRole('button', { name: 'Freeze model version' })).toBeNull();
  });

  it('offers only Asimov or control-region data while blinded, and sends the options chosen', async () => {
    const calls = serve('analyst', 'blinded');
    const user = userEvent.setup();
    const { router } = render();
    const form = await screen.findByRole('form', { name: 'Run a fit' });
    expect(within(form).getByText(/The analysis is blinded/)).toBeTruthy();
    expect((within(form).getByRole('radio', { name: 'Observed data, all regions' }) as HTMLInputElement).disabled).toBe(true);
    expect((within(form).getByRole('radio', { name: 'Pre-fit Asimov dataset' }) as HTMLInputElement).checked).toBe(true);
    await user.type(within(form).getByLabelText('Label'), 'Sidebands');
    await user.click(within(form).getByRole('radio', { name: 'Observed data, control regions only' }));
    await user.click(within(form).getByRole('radio', { name: 'Quick' }));
    await user.click(within(form).getByRole('button', { name: 'Run the fit' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits')).toBe(true));
    const body = calls.find((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits')!.body as { version: number; label: string; options: Record<string, unknown> };
    expect(body.version).toBe(2);
    expect(body.label).toBe('Sidebands');
    expect(body.options).toMatchObject({ dataset: 'observed', controlOnly: true, impacts: 'quick', scan: false, limit: false, overConstraintThreshold: 0.5 });
    await waitFor(() => expect(router.state.location.pathname).toBe('/a/demo/fits/8'));
  });

  it('fits observed data by default once unblinded, and an Asimov dataset at the μ typed', async () => {
    const calls = serve('analyst', 'unblinded');
    const user = userEvent.setup();
    render();
    const form = await screen.findByRole('form', { name: 'Run a fit' });
    expect((within(form).getByRole('radio', { name: 'Observed data, all regions' }) as HTMLInputElement).checked).toBe(true);
    const mu = within(form).getByLabelText('Signal strength of the Asimov dataset');
    await user.clear(mu);
    await user.type(mu, '0');
    await user.click(within(form).getByLabelText('95 % CL upper limit on μ (CLs)'));
    await user.click(within(form).getByRole('button', { name: 'Run the fit' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits')).toBe(true));
    const body = calls.find((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits')!.body as { options: Record<string, unknown> };
    expect(body.options).toMatchObject({ dataset: 'asimov', asimovMu: 0, controlOnly: false, impacts: 'full', scan: true, limit: true });
  });

  it('lets a convener freeze a version for approval, and an analyst only a plain one', async () => {
    const calls = serve('convener', 'blinded');
    const user = userEvent.setup();
    render();
    await screen.findByRole('list', { name: 'Model versions' });
    expect(screen.queryByRole('form', { name: 'Run a fit' })).toBeNull();
    await user.type(screen.getByLabelText('Note'), 'for the review');
    await user.click(screen.getByLabelText('Put this version forward for approval'));
    await user.click(screen.getByRole('button', { name: 'Freeze model version' }));
    expect(await screen.findByText('Version 3 frozen.')).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST' && c.url === '/api/analyses/demo/versions')!.body).toEqual({ note: 'for the review', forApproval: true });
    cleanup();
    vi.unstubAllGlobals();

    serve('analyst', 'blinded');
    render();
    await screen.findByRole('button', { name: 'Freeze model version' });
    expect(screen.queryByLabelText('Put this version forward for approval')).toBeNull();
  });

  it('shows a convener the gates of a version for approval, and sends the reason to freeze it with items open', async () => {
    const overridden: ModelVersion = { ...version, number: 3, forApproval: true, register: { accepted: 38, submitted: 2 }, override: { reason: 'Settled at the meeting.', by: 'Mira Quellbright', openItems: ['a', 'b'] } };
    const calls = stubServer((method, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('convener', 'blinded'));
      if (url === '/api/analyses/demo/fits' && method === 'GET') return json(200, []);
      if (url === '/api/analyses/demo/versions' && method === 'GET') return json(200, [version]);
      if (url === '/api/analyses/demo/versions' && method === 'POST') return json(201, overridden);
      if (url === '/api/analyses/demo/versions/approval-checklist')
        return json(200, {
          version: 2,
          ready: false,
          computedAt: '2026-03-01T09:00:00Z',
          items: [
            { key: 'entries-accepted', label: 'Every active register entry is accepted', ok: false, detail: '2 of 40 are not accepted.', open: ['jes: submitted for review', 'pdf: draft'] },
            { key: 'no-open-questions', label: 'No question is open', ok: true, detail: 'Every question is resolved.', open: [] },
          ],
        });
      return undefined;
    });
    const user = userEvent.setup();
    render();
    await screen.findByRole('list', { name: 'Model versions' });
    expect(screen.queryByLabelText('Why freeze it for approval with these items open')).toBeNull();
    await user.click(screen.getByLabelText('Put this version forward for approval'));
    const gates = await screen.findByRole('region', { name: 'For approval' });
    expect(gates.textContent).toContain('1 of 2 hold');
    expect(gates.textContent).toContain('jes: submitted for review');
    await user.type(screen.getByLabelText('Why freeze it for approval with these items open'), 'Settled at the meeting.');
    await user.click(screen.getByRole('button', { name: 'Freeze model version' }));
    expect(await screen.findByText('Version 3 frozen.')).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST' && c.url === '/api/analyses/demo/versions')!.body).toEqual({ note: '', forApproval: true, overrideReason: 'Settled at the meeting.' });
  });

  it('asks how to keep each variation whose nominal changed, and sends the choices with the freeze', async () => {
    const calls = stubServer((method, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('analyst', 'blinded'));
      if (url === '/api/analyses/demo/fits' && method === 'GET') return json(200, []);
      if (url === '/api/analyses/demo/versions' && method === 'GET') return json(200, [version]);
      if (url === '/api/analyses/demo/versions' && method === 'POST') return json(201, { ...version, number: 3 });
      if (url === '/api/analyses/demo/versions/stale-effects') return json(200, [{ effectId: 41, entry: 'jes', region: 'SR', process: 'ttbar', since: '2026-03-01T09:00:00Z', bins: [2, 4] }]);
      return undefined;
    });
    const user = userEvent.setup();
    render();
    const group = await screen.findByRole('group', { name: 'Variations made against a nominal that has changed since' });
    expect(group.textContent).toContain('jes · ttbar in SR');
    await user.click(within(group).getByLabelText('relative shift'));
    await user.click(screen.getByRole('button', { name: 'Freeze model version' }));
    expect(await screen.findByText('Version 3 frozen.')).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST' && c.url === '/api/analyses/demo/versions')!.body).toEqual({ note: '', forApproval: false, staleChoices: [{ effectId: 41, keep: 'relative' }] });
  });

  it('shows live progress and a cancel button for a running fit', async () => {
    serve('analyst', 'blinded', [fitSummary({ state: 'running', progress: 0.25, stage: 'scan of μ', headline: null })]);
    render();
    const table = await screen.findByRole('table', { name: 'Fits' });
    expect(within(table).getByRole('progressbar', { name: /Progress of/ }).getAttribute('aria-valuenow')).toBe('25');
    expect(within(table).getByText(/scan of μ/)).toBeTruthy();
    expect(within(table).getByRole('button', { name: 'Cancel Observed, full impacts' })).toBeTruthy();
  });
});
