// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { MemberRole } from '@shared/permissions';
import type { QuestionDetail } from '@shared/schemas/review';
import { QuestionsRoute } from '../../src/app/routes/analysis/questions';
import { QuestionRoute } from '../../src/app/routes/analysis/question';
import { fitSummary, overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { questionDetail, questionSummary } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const entries = [
  { key: 'jes', label: 'Jet energy scale', group: 'jets', owner: { id: 4, name: 'Pim Sorel', email: 'pim@x' }, state: 'accepted', processes: [], regions: [], kinds: [], largestEffectPct: null, warnings: 0, openQuestions: 1, updatedAt: '2026-01-01T00:00:00Z' },
  { key: 'lumi', label: 'Luminosity', group: 'luminosity', owner: { id: 5, name: 'Juno Vale', email: 'juno@x' }, state: 'accepted', processes: [], regions: [], kinds: [], largestEffectPct: null, warnings: 0, openQuestions: 0, updatedAt: '2026-01-01T00:00:00Z' },
];

function serveList() {
  return stubServer((_method, url) => {
    if (url === '/api/analyses/demo') return json(200, overview('convener'));
    if (url === '/api/analyses/demo/entries') return json(200, entries);
    if (url === '/api/analyses/demo/members') return json(200, []);
    if (url === '/api/analyses/demo/fits') return json(200, [fitSummary(), fitSummary({ id: 9, label: 'Asimov' })]);
    if (url.startsWith('/api/analyses/demo/questions')) {
      const state = new URL(url, 'http://x').searchParams.get('state');
      const all = [questionSummary(), questionSummary({ id: 12, title: 'Is the lumi pull expected?', state: 'resolved', entry: { key: 'lumi', label: 'Luminosity', group: 'luminosity', owner: { id: 5, name: 'Juno Vale' } } })];
      return json(200, state ? all.filter((q) => q.state === state) : all);
    }
    return undefined;
  });
}

describe('the questions screen', () => {
  it('lists the questions, each opening its thread', async () => {
    serveList();
    renderWithApp(<QuestionsRoute />, '/a/demo/questions', '/a/:slug/questions');
    const table = await screen.findByRole('table', { name: 'Questions' });
    const rows = within(table).getAllByRole('row').slice(1);
    expect(rows).toHaveLength(2);
    expect(within(rows[0]).getByRole('link', { name: 'Why is jes constrained to 0.44?' }).getAttribute('href')).toBe('/a/demo/questions/11');
    expect(within(rows[0]).getByText('Open')).toBeTruthy();
    expect(within(rows[1]).getByText('Resolved')).toBeTruthy();
  });

  it('puts every filter in the address and in the request', async () => {
    const user = userEvent.setup();
    const calls = serveList();
    const { router } = renderWithApp(<QuestionsRoute />, '/a/demo/questions', '/a/:slug/questions');
    await screen.findByRole('table', { name: 'Questions' });
    await user.selectOptions(screen.getByLabelText('State'), 'open');
    await waitFor(() => expect(within(screen.getByRole('table', { name: 'Questions' })).getAllByRole('row')).toHaveLength(2));
    expect(router.state.location.search).toBe('?state=open');
    expect(calls.map((c) => c.url)).toContain('/api/analyses/demo/questions?state=open');
    await screen.findByRole('option', { name: 'Pim Sorel' });
    await user.selectOptions(screen.getByLabelText('Owner'), 'Pim Sorel');
    await user.selectOptions(screen.getByLabelText('Group'), 'jets');
    await user.selectOptions(screen.getByLabelText('Fit'), '#9 Asimov');
    expect(new URLSearchParams(router.state.location.search).toString()).toBe('state=open&owner=4&group=jets&fit=9');
    await waitFor(() => expect(calls.map((c) => c.url)).toContain('/api/analyses/demo/questions?state=open&owner=4&group=jets&fit=9'));
    await user.selectOptions(screen.getByLabelText('State'), 'Any');
    expect(router.state.location.search).toBe('?owner=4&group=jets&fit=9');
  });

  it('reads the filters from the address it opens at', async () => {
    const calls = serveList();
    renderWithApp(<QuestionsRoute />, '/a/demo/questions?state=resolved&entry=lumi', '/a/:slug/questions');
    await screen.findByRole('table', { name: 'Questions' });
    expect((screen.getByLabelText('State') as HTMLSelectElement).value).toBe('resolved');
    expect(calls.map((c) => c.url)).toContain('/api/analyses/demo/questions?state=resolved&entry=lumi');
    expect(screen.getByRole('button', { name: 'Remove the parameter filter lumi' })).toBeTruthy();
  });
});

function serveThread(role: MemberRole, detail: QuestionDetail, reply?: (method: string, url: string, body: unknown) => Response | undefined) {
  return stubServer((method, url, body) => {
    if (url === '/api/analyses/demo') return json(200, overview(role));
    if (url === '/api/analyses/demo/questions/11' && method === 'GET') return json(200, detail);
    return reply?.(method, url, body);
  });
}

describe('a question’s thread', () => {
  it('shows the question and its answers with who and when', async () => {
    serveThread('reader', questionDetail({ state: 'answered', answers: 1, thread: [{ id: 1, author: { id: 4, name: 'Pim Sorel' }, body: 'The halo control region has 10⁴ events.', createdAt: '2026-03-03T10:00:00Z', evidence: [] }] }));
    renderWithApp(<QuestionRoute />, '/a/demo/questions/11', '/a/:slug/questions/:id');
    expect(await screen.findByRole('heading', { name: 'Why is jes constrained to 0.44?' })).toBeTruthy();
    expect(screen.getByText(/Is the 30 % halo variation right\?/)).toBeTruthy();
    const thread = screen.getByRole('region', { name: 'Thread' });
    expect(within(thread).getByText('The halo control region has 10⁴ events.')).toBeTruthy();
    expect(within(thread).getByText('Pim Sorel')).toBeTruthy();
    // a reader answers too (review committees ask and discuss), but does not resolve
    expect(screen.getByRole('form', { name: 'Answer' })).toBeTruthy();
    expect(screen.queryByRole('button', { name: /Resolve|Reopen/ })).toBeNull();
  });

  it.each([
    ['contact', true, false],
    ['analyst', true, false],
    ['convener', true, true],
  ] as const)('as a %s: answer form %s, resolve %s', async (role, answer, resolve) => {
    serveThread(role, questionDetail());
    renderWithApp(<QuestionRoute />, '/a/demo/questions/11', '/a/:slug/questions/:id');
    await screen.findByRole('heading', { name: 'Why is jes constrained to 0.44?' });
    await waitFor(() => expect(screen.queryByRole('form', { name: 'Answer' }) !== null).toBe(answer));
    expect(screen.queryByRole('button', { name: 'Resolve the question' }) !== null).toBe(resolve);
  });

  it('posts an answer and shows the thread the server returns', async () => {
    const user = userEvent.setup();
    const calls = serveThread('contact', questionDetail(), (method, url, body) =>
      method === 'POST' && url === '/api/analyses/demo/questions/11/answers'
        ? json(201, questionDetail({ state: 'answered', answers: 1, thread: [{ id: 3, author: { id: 4, name: 'Pim Sorel' }, body: (body as { body: string }).body, createdAt: '2026-03-03T10:00:00Z', evidence: [] }] }))
        : undefined,
    );
    renderWithApp(<QuestionRoute />, '/a/demo/questions/11', '/a/:slug/questions/:id');
    const form = await screen.findByRole('form', { name: 'Answer' });
    await user.type(within(form).getByLabelText('Your answer'), 'Checked: 30 % is the measured spread.');
    await user.click(within(form).getByRole('button', { name: 'Post the answer' }));
    expect(await screen.findByText('Checked: 30 % is the measured spread.')).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ body: 'Checked: 30 % is the measured spread.', evidence: [] });
    expect(screen.getByText('Answered')).toBeTruthy();
  });

  it('lets a convener resolve with a note, then reopen', async () => {
    const user = userEvent.setup();
    const calls = serveThread('convener', questionDetail({ state: 'answered' }), (method, url) => {
      if (method === 'POST' && url.endsWith('/resolve')) return json(200, questionDetail({ state: 'resolved', resolvedBy: { id: 2, name: 'Mira Quell' }, resolvedAt: '2026-03-04T10:00:00Z' }));
      if (method === 'POST' && url.endsWith('/reopen')) return json(200, questionDetail({ state: 'open' }));
      return undefined;
    });
    renderWithApp(<QuestionRoute />, '/a/demo/questions/11', '/a/:slug/questions/:id');
    await user.type(await screen.findByLabelText('Note on resolving (optional)'), 'Understood.');
    await user.click(screen.getByRole('button', { name: 'Resolve the question' }));
    expect(await screen.findByText(/Resolved by Mira Quell/)).toBeTruthy();
    expect(calls.find((c) => c.url.endsWith('/resolve'))?.body).toEqual({ note: 'Understood.' });
    await user.click(screen.getByRole('button', { name: 'Reopen the question' }));
    await waitFor(() => expect(calls.find((c) => c.url.endsWith('/reopen'))?.body).toEqual({ note: '' }));
  });
});
