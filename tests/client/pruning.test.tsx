// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { PruningItem, PruningOverview, PruningPreview } from '@shared/schemas/register';
import { PruningScreen } from '../../src/features/pruning/components/pruning-screen';
import { resetCsrfToken } from '../../src/lib/api-client';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

const BASE = '/api/analyses/demo/pruning';

function item(id: number, overrides: Partial<PruningItem> = {}): PruningItem {
  return {
    effectId: id,
    entry: { key: `sys_${id}`, label: `Systematic ${id}`, state: 'draft' },
    region: 'SR',
    process: 'bkg',
    kind: 'scale',
    largestPct: 0.04,
    flatP: null,
    reason: { rule: 'small', largestPct: 0.04 },
    pruned: null,
    normalisation: null,
    ...overrides,
  };
}

const flat = (id: number, estimated = true): PruningItem =>
  item(id, { kind: 'shape', largestPct: 1.7, flatP: 0.82, reason: { rule: 'flat-shape', p: 0.82, estimated, normalisation: { up: 1.0123, down: 0.9871 } }, normalisation: { up: 1.0123, down: 0.9871 } });

function overview(overrides: Partial<PruningOverview> = {}): PruningOverview {
  return {
    rules: { belowPct: 0.1, shapeP: 0.05 },
    candidates: [item(1), flat(2), flat(3, false)],
    pruned: [],
    effects: 40,
    reference: { id: 7, label: 'Observed, full impacts', version: 2 },
    ...overrides,
  };
}

function preview(state: PruningPreview['state'], overrides: Partial<PruningPreview> = {}): PruningPreview {
  return {
    id: 31,
    state,
    fit: { id: 7, label: 'Observed, full impacts' },
    createdAt: '2026-03-01T10:00:00Z',
    failure: null,
    selection: [
      { effectId: 1, entry: 'sys_1', region: 'SR', process: 'bkg', kind: 'scale', as: 'dropped' },
      { effectId: 2, entry: 'sys_2', region: 'SR', process: 'bkg', kind: 'shape', as: 'normalisation' },
    ],
    absent: [],
    mu: state === 'done' ? { before: 1.2, after: 1.212, fixed: false } : null,
    muError: state === 'done' ? { before: 0.2, after: 0.19 } : null,
    moved:
      state === 'done'
        ? [
            { name: 'sys_2', pull: { before: 0.4, after: 0.1 }, constraint: { before: 0.8, after: 0.95 } },
            // every effect of sys_1 left out: no parameter in the refit
            { name: 'sys_1', pull: { before: 0.02, after: null }, constraint: { before: 0.99, after: null } },
          ]
        : [],
    warnings: [],
    seconds: state === 'done' ? 0.4 : null,
    ...overrides,
  };
}

/** Text as read aloud: the arrows are hidden, their words ("to") are not. */
const spoken = (el: Element) => (el.textContent ?? '').replace(/→/g, '');

const renderScreen = (o: PruningOverview, mayEdit = true) => renderWithApp(<PruningScreen slug="demo" overview={o} mayEdit={mayEdit} />);

describe('the pruning screen', () => {
  it('groups the candidates by rule, each with its reason, and marks the ones whose errors were estimated', () => {
    stubServer(() => undefined);
    renderScreen(overview());
    const small = screen.getByRole('table', { name: 'Candidates: Below 0.1 % in every bin' });
    expect(within(small).getAllByRole('row')).toHaveLength(2);
    expect(within(small).getByRole('rowheader', { name: /sys_1/ })).toBeTruthy();
    expect(within(small).getByText('at most 0.04 % in a bin')).toBeTruthy();
    const shapes = screen.getByRole('table', { name: 'Candidates: Shapes flat within their noise (p above 0.05)' });
    const [, estimated, given] = within(shapes).getAllByRole('row');
    expect(within(estimated).getByText('errors estimated')).toBeTruthy();
    expect(within(given).queryByText('errors estimated')).toBeNull();
    expect(within(given).getByText('given')).toBeTruthy();
    expect(within(estimated).getByText('κ 1.0123 / 0.9871')).toBeTruthy();
    expect(screen.getByLabelText('Summary').textContent).toBe('The rules propose 3 effects of the 40 in the fit: 1 below the size threshold, 2 flat within their noise. None is pruned yet.');
  });

  it('previews a selection, polling until the refit is done, and shows μ̂, σ_μ and the pulls and constraints that move', async () => {
    const user = userEvent.setup();
    let polls = 0;
    const calls = stubServer((method, url) => {
      if (method === 'POST' && url === `${BASE}/previews`) return json(202, preview('running'));
      if (method === 'GET' && url === `${BASE}/previews/31`) return json(200, ++polls < 2 ? preview('running') : preview('done'));
      return undefined;
    });
    renderScreen(overview());
    await user.click(screen.getByRole('checkbox', { name: 'Select sys_1 on SR × bkg (scale)' }));
    await user.click(screen.getByRole('checkbox', { name: 'Select sys_2 on SR × bkg (shape)' }));
    expect(screen.getByText('2 effects selected')).toBeTruthy();
    // pruning waits for a preview of this selection
    expect((screen.getByRole('button', { name: 'Prune 2 effects' }) as HTMLButtonElement).disabled).toBe(true);
    await user.click(screen.getByRole('button', { name: 'Preview what pruning changes' }));
    expect(calls.find((c) => c.method === 'POST')!.body).toEqual({ effects: [{ id: 1 }, { id: 2 }] });
    await screen.findByText('Refitting without the selection; the numbers appear here when it is done.');

    const mu = await waitFor(() => screen.getByLabelText('Signal strength before and after'), { timeout: 4000 });
    expect(spoken(mu)).toContain('1.200 to 1.212');
    expect(spoken(mu)).toContain('+0.06 σ_μ');
    expect(spoken(mu)).toContain('0.200 to 0.190');
    expect(spoken(mu)).toContain('−5.0 %');
    const moved = screen.getByRole('table', { name: 'Pulls and constraints that change' });
    expect(within(moved).getByRole('rowheader', { name: 'sys_2' }).closest('tr')!.textContent!.replace(/→/g, '')).toContain('0.40 to 0.10');
    expect(within(moved).getByRole('rowheader', { name: 'sys_1' }).closest('tr')!.textContent!.replace(/→/g, '')).toBe('sys_10.02 to removed0.99 to removed');
    expect(polls).toBeGreaterThanOrEqual(2);
    expect((screen.getByRole('button', { name: 'Prune 2 effects' }) as HTMLButtonElement).disabled).toBe(false);

    // a changed selection makes the preview stale
    await user.click(screen.getByRole('checkbox', { name: 'Select sys_3 on SR × bkg (shape)' }));
    expect(screen.getByText(/The selection changed since this preview/)).toBeTruthy();
    expect((screen.getByRole('button', { name: 'Prune 3 effects' }) as HTMLButtonElement).disabled).toBe(true);
  });

  it('prunes only with a comment, sending the selection and the comment', async () => {
    const user = userEvent.setup();
    const pruned = overview({ candidates: [flat(3, false)], pruned: [{ ...item(1), pruned: 'dropped' }, { ...flat(2), pruned: 'normalisation' }] });
    const calls = stubServer((method, url) => {
      if (method === 'POST' && url === `${BASE}/previews`) return json(202, preview('done'));
      if (method === 'GET' && url === `${BASE}/previews/31`) return json(200, preview('done'));
      if (method === 'POST' && url === BASE) return json(200, pruned);
      return undefined;
    });
    renderScreen(overview());
    await user.click(screen.getByRole('checkbox', { name: 'Select sys_1 on SR × bkg (scale)' }));
    await user.click(screen.getByRole('checkbox', { name: 'Select sys_2 on SR × bkg (shape)' }));
    await user.click(screen.getByRole('button', { name: 'Preview what pruning changes' }));
    await screen.findByText('Refit converged');
    await user.click(screen.getByRole('button', { name: 'Prune 2 effects' }));
    expect(screen.getByText(/Say why these effects can go/)).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST' && c.url === BASE)).toBe(false);

    await user.type(screen.getByLabelText('Why these effects can go (required)'), 'Below the analysis threshold.');
    await user.click(screen.getByRole('button', { name: 'Prune 2 effects' }));
    await screen.findByText(/^Pruned 2 effects\./);
    expect(calls.find((c) => c.method === 'POST' && c.url === BASE)!.body).toEqual({ effects: [{ id: 1 }, { id: 2 }], comment: 'Below the analysis threshold.' });
  });

  it('lists pruned effects with the κ a shape keeps, and restores one', async () => {
    const user = userEvent.setup();
    // pruned although the rules no longer propose it: the κ still comes with the item
    const kept = { ...flat(2), reason: null, pruned: 'normalisation' as const };
    const calls = stubServer((method, url) => (method === 'POST' && url === `${BASE}/restore` ? json(200, overview()) : undefined));
    renderScreen(overview({ pruned: [{ ...item(1), pruned: 'dropped' }, kept] }));
    const table = screen.getByRole('table', { name: 'Pruned effects' });
    const row = (key: string) => within(table).getByRole('rowheader', { name: new RegExp(key) }).closest('tr')!;
    expect(row('sys_1').textContent).toContain('left out of the fit');
    expect(row('sys_2').textContent).toContain('normalisation only, κ 1.0123 / 0.9871');
    expect(row('sys_2').textContent).toContain('not proposed by the rules now');
    await user.click(within(table).getByRole('button', { name: 'Restore sys_2 on SR × bkg (shape)' }));
    await waitFor(() => expect(calls.find((c) => c.url === `${BASE}/restore`)?.body).toEqual({ effects: [2], comment: '' }));
  });

  it('is read-only for those who do not edit the model: no selection, no rule fields, no restore', () => {
    stubServer(() => undefined);
    renderScreen(overview({ pruned: [{ ...item(9), pruned: 'dropped' }] }), false);
    expect(screen.queryAllByRole('checkbox')).toHaveLength(0);
    expect(screen.queryByRole('textbox')).toBeNull();
    expect(screen.queryByRole('button', { name: /^(Preview|Prune \d|Restore|Apply)/ })).toBeNull();
    expect(screen.getByText('Analysts change the rules.')).toBeTruthy();
  });

  it('changes the rules and shows a refusal on its field', async () => {
    const user = userEvent.setup();
    const calls = stubServer((method, url, body) => {
      if (method !== 'PUT' || url !== `${BASE}/rules`) return undefined;
      const b = body as { belowPct: number };
      return b.belowPct > 100 ? json(400, { error: { message: 'Invalid request.', issues: [{ path: ['belowPct'], message: 'must be at most 100 (percent)' }] } }) : json(200, overview({ rules: { belowPct: 2, shapeP: 0.05 } }));
    });
    renderScreen(overview());
    const field = screen.getByLabelText('Small: below (% in every bin)');
    await user.clear(field);
    await user.type(field, '200');
    await user.click(screen.getByRole('button', { name: 'Apply the rules' }));
    await screen.findByText('must be at most 100 (percent)');
    await user.clear(field);
    await user.type(field, '2');
    await user.click(screen.getByRole('button', { name: 'Apply the rules' }));
    await screen.findByText(/Applied: the candidates below follow the new rules/);
    expect(calls.filter((c) => c.method === 'PUT').map((c) => c.body)).toEqual([
      { belowPct: 200, shapeP: 0.05 },
      { belowPct: 2, shapeP: 0.05 },
    ]);
  });
});
