// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { Reproduction } from '@shared/schemas/fits';
import { FitResultRoute } from '../../src/app/routes/analysis/fit-result';
import { fitDetail, fitSummary, overview, type StoredFit } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const ROUTE = '/a/:slug/fits/:fitId/:tab?';

function serve(detail: StoredFit, role: 'analyst' | 'reader', reproduction?: Reproduction) {
  return stubServer((method, url) => {
    if (url === '/api/analyses/demo') return json(200, overview(role, 'unblinded'));
    if (url === '/api/analyses/demo/fits/7' && method === 'GET') return json(200, detail);
    if (url === '/api/analyses/demo/fits/7/reproduction' && reproduction) return json(200, reproduction);
    if (url === '/api/analyses/demo/fits/7/reproduce' && method === 'POST') return json(202, fitSummary({ id: 9, state: 'queued', reproduces: 7, headline: null }));
    if (url === '/api/analyses/demo/fits') return json(200, []);
    return undefined;
  });
}

describe('what computed a fit, and Reproduce', () => {
  it('names the engine and input, and lets an analyst rerun the fit', async () => {
    const calls = serve(fitDetail(), 'analyst');
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    const source = await screen.findByTitle(/SHA-256 of the engine's sources/);
    expect(source.textContent).toBe('aaaaaaaaaaaa');
    expect(screen.getByTitle(/SHA-256 of the exact input/).getAttribute('title')).toContain('b'.repeat(64));
    await userEvent.click(screen.getByRole('button', { name: 'Reproduce' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits/7/reproduce')).toBe(true));
    // and opens the new fit
    await waitFor(() => expect(calls.some((c) => c.method === 'GET' && c.url === '/api/analyses/demo/fits/9')).toBe(true));
  });

  it('offers a reader no Reproduce', async () => {
    serve(fitDetail(), 'reader');
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    await screen.findByTitle(/SHA-256 of the engine's sources/);
    expect(screen.queryByRole('button', { name: 'Reproduce' })).toBeNull();
  });

  it('on a rerun, says whether every number is identical, and lists those that are not', async () => {
    serve(fitDetail({ reproduces: 3 }), 'reader', { fitId: 7, of: 3, sameEngine: true, sameInput: true, compared: 834, count: 0, differences: [] });
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    const panel = await screen.findByRole('region', { name: 'Reproduction' });
    await waitFor(() => expect(panel.textContent).toContain('All 834 numbers of the result are identical. Same engine. Same input.'));
    cleanup();
    serve(fitDetail({ reproduces: 3 }), 'reader', {
      fitId: 7,
      of: 3,
      sameEngine: false,
      sameInput: true,
      compared: 834,
      count: 1,
      differences: [{ path: 'nuisance.2.pull', original: 0.25, rerun: 0.2500001 }],
    });
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', ROUTE);
    const changed = await screen.findByRole('region', { name: 'Reproduction' });
    await waitFor(() => expect(changed.textContent).toContain('1 of the 834 compared places differ'));
    expect(changed.textContent).toContain('A different engine');
    const row = within(changed).getByText('nuisance.2.pull').closest('tr')!;
    expect(row.textContent).toContain('0.25');
    expect(row.textContent).toContain('0.2500001');
  });
});
