// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider } from 'react-router';
import type { EntrySummary } from '@shared/schemas/api';
import { FitResultRoute } from '../../src/app/routes/analysis/fit-result';
import { RegisterTable } from '../../src/features/register/components/register-table';
import { questionMarks } from '../../src/features/questions/use-question-marks';
import { fitDetail, overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { questionSummary } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function entry(key: string, openQuestions: number): EntrySummary {
  return { key, label: key, group: 'jets', owner: null, state: 'accepted', processes: [], regions: [], kinds: [], largestEffectPct: null, warnings: 0, openQuestions, pruning: { candidates: 0, pruned: 0 }, updatedAt: '2026-01-01T00:00:00Z' };
}

describe('question markers', () => {
  it('mark a register entry with unresolved questions, in words, linking to its questions', () => {
    const router = createMemoryRouter([{ path: '*', element: <RegisterTable slug="demo" entries={[entry('jes', 2), entry('lumi', 0)]} /> }]);
    render(<RouterProvider router={router} />);
    const marker = screen.getByRole('link', { name: '2 unresolved questions on jes' });
    expect(marker.getAttribute('href')).toBe('/a/demo/questions?entry=jes');
    expect(screen.queryByRole('link', { name: /unresolved questions? on lumi/ })).toBeNull();
  });

  it('count open and answered questions, and leave resolved ones out', () => {
    const marks = questionMarks([
      questionSummary({ id: 1, state: 'answered' }),
      questionSummary({ id: 2, state: 'open' }),
      questionSummary({ id: 3, state: 'resolved', entry: { key: 'lumi', label: '', group: null, owner: null } }),
    ]);
    expect(marks.get('jes')).toEqual({ state: 'open', count: 2 });
    expect(marks.has('lumi')).toBe(false);
  });

  it('mark parameters in the impact ranking and the pulls, and let a convener raise a question from a row', async () => {
    const user = userEvent.setup();
    const detail = fitDetail();
    const { correlation, information, yields, gammas, ...head } = detail.result!;
    void correlation;
    void information;
    void yields;
    const calls = stubServer((method, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('convener'));
      if (url === '/api/analyses/demo/fits/7') return json(200, { ...detail, result: { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
      if (url === '/api/analyses/demo/questions' && method === 'GET') return json(200, [questionSummary({ state: 'answered' })]);
      if (url === '/api/analyses/demo/questions' && method === 'POST') return json(201, { ...questionSummary({ id: 20, entry: { key: 'lumi', label: 'Luminosity', group: null, owner: null } }), body: 'b', thread: [] });
      if (url === '/api/analyses/demo/model') return json(200, { regions: [], processes: [], floatingNorms: [] });
      return undefined;
    });
    const { router } = renderWithApp(<FitResultRoute />, '/a/demo/fits/7/impacts', '/a/:slug/fits/:fitId/:tab?');
    const table = await screen.findByRole('table', { name: 'Impact ranking' });
    const marker = await within(table).findByRole('img', { name: /1 unresolved question on this parameter, answered/ });
    expect(marker.closest('tr')?.textContent).toContain('jes');
    expect(within(table).getAllByRole('img', { name: /unresolved question/ })).toHaveLength(1);

    // lumi is below the 90 % cut: every parameter is a click away
    expect(within(table).queryByRole('button', { name: 'Raise a question on lumi' })).toBeNull();
    await user.click(screen.getByRole('radio', { name: 'all' }));
    await user.click(within(table).getByRole('button', { name: 'Raise a question on lumi' }));
    expect(router.state.location.pathname).toBe('/a/demo/fits/7/impacts');
    const form = screen.getByRole('form', { name: 'Raise a question on lumi' });
    await user.type(within(form).getByLabelText('Title'), 'Is the lumi pull expected?');
    await user.type(within(form).getByLabelText('Question'), 'It is pulled by −1.4.');
    await user.click(within(form).getByRole('button', { name: 'Raise the question' }));
    await waitFor(() => expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ entry: 'lumi', fitId: 7, title: 'Is the lumi pull expected?', body: 'It is pulled by −1.4.' }));

    // the pulls table marks the same parameter and links to its diagnosis
    await router.navigate('/a/demo/fits/7/pulls');
    const pulls = await screen.findByRole('table', { name: 'Pulls and constraints' });
    const jes = within(pulls).getByRole('link', { name: 'jes' });
    expect(jes.getAttribute('href')).toBe('/a/demo/fits/7/diagnostics?parameter=jes');
    expect(within(jes.closest('tr')!).getByRole('img', { name: /unresolved question/ })).toBeTruthy();
  });

  // every member may ask: review committees read, and ask
  it('offers the row action to a reader too', async () => {
    const detail = fitDetail();
    const { correlation, information, yields, gammas, ...head } = detail.result!;
    void correlation;
    void information;
    void yields;
    stubServer((_method, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('reader'));
      if (url === '/api/analyses/demo/fits/7') return json(200, { ...detail, result: { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
      if (url === '/api/analyses/demo/questions') return json(200, []);
      return undefined;
    });
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7/impacts', '/a/:slug/fits/:fitId/:tab?');
    const table = await screen.findByRole('table', { name: 'Impact ranking' });
    expect(within(table).getAllByRole('button', { name: /Raise a question/ }).length).toBeGreaterThan(0);
  });
});
