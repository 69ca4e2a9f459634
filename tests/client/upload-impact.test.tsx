// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, within } from '@testing-library/react';
import type { EntrySummary } from '@shared/schemas/api';
import type { EntryDetail, ImpactCheck } from '@shared/schemas/register';
import { ImpactCheckPanel } from '../../src/features/entry/components/impact-check-panel';
import { EffectsList } from '../../src/features/entry/components/effects-list';
import { RegisterTable } from '../../src/features/register/components/register-table';
import { resetCsrfToken } from '../../src/lib/api-client';
import { renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
  resetCsrfToken();
});

/** Text as read aloud: the arrows are hidden, their words ("to") are not. */
const spoken = (el: Element) => (el.textContent ?? '').replace(/→/g, '');

function check(overrides: Partial<ImpactCheck> = {}): ImpactCheck {
  return {
    state: 'done',
    fit: { id: 4, label: 'Observed, full impacts' },
    createdAt: '2026-03-01T10:00:00Z',
    failure: null,
    mu: { before: 1.0038, after: 0.9887, fixed: false },
    muError: { before: 0.1078, after: 0.1145 },
    focus: [
      {
        name: 'continuum_shape',
        pull: { before: -0.281, after: -0.416 },
        constraint: { before: 0.947, after: 0.854 },
        impact: { up: 0.0488, down: -0.0498 },
        rankBefore: 4,
        rankAfter: 2,
      },
    ],
    moved: [
      { name: 'continuum_shape', pull: { before: -0.281, after: -0.416 }, constraint: { before: 0.947, after: 0.854 } },
      { name: 'halo_norm', pull: { before: 0.6, after: 1.3 }, constraint: { before: 0.4, after: 0.42 } },
    ],
    warnings: [],
    seconds: 0.8,
    ...overrides,
  };
}

const renderPanel = (c: ImpactCheck) => renderWithApp(<ImpactCheckPanel slug="demo" check={c} />);

describe('what an upload does to the result, on the entry page', () => {
  it('shows μ̂ and σ_μ before and after with their change, the entry’s parameter, the parameters that moved and the compared fit', () => {
    stubServer(() => undefined);
    renderPanel(check());
    expect(screen.getByText('Refit converged')).toBeTruthy();
    expect(screen.getByRole('link', { name: 'Observed, full impacts' }).getAttribute('href')).toBe('/a/demo/fits/4');
    const mu = screen.getByLabelText('Signal strength before and after');
    // σ_μ 0.108 gives three decimals for μ̂; Δμ̂ = −0.0151 = −0.14 σ_μ, Δσ_μ = +6.2 %
    expect(spoken(mu)).toBe('μ̂1.004 to 0.989−0.015 (−0.14 σ_μ)σ_μ0.108 to 0.115+0.007 (+6.2 %)');
    const focus = screen.getByRole('region', { name: 'Parameter continuum_shape' });
    expect(spoken(focus)).toContain('Pull−0.28 to −0.42');
    expect(spoken(focus)).toContain('Constraint0.95 to 0.85');
    expect(spoken(focus)).toContain('+0.049 / −0.050');
    expect(spoken(focus)).toContain('#4 to #2');
    const moved = screen.getByRole('table', { name: 'Parameters that moved with this upload' });
    // the largest move first
    expect(within(moved).getAllByRole('rowheader').map((r) => r.textContent)).toEqual(['halo_norm', 'continuum_shape']);
  });

  it('puts the refit’s warnings beside its state, and says when there are none', () => {
    stubServer(() => undefined);
    const { unmount } = renderPanel(check());
    expect(screen.getByText('no warnings')).toBeTruthy();
    unmount();
    renderPanel(check({ warnings: ['At a bound of its range in the refit: halo_norm.'] }));
    expect(screen.getByText('1 warning')).toBeTruthy();
    expect(within(screen.getByRole('list', { name: 'Warnings of the refit' })).getByText('At a bound of its range in the refit: halo_norm.')).toBeTruthy();
  });

  it('says so when the compared fit holds μ, and gives no impact', () => {
    stubServer(() => undefined);
    renderPanel(check({ mu: { before: null, after: null, fixed: true }, muError: { before: null, after: null }, focus: [{ ...check().focus[0], impact: null, rankBefore: null, rankAfter: null }] }));
    expect(screen.getByText(/The compared fit holds μ \(it fits the control regions only\)/)).toBeTruthy();
    expect(screen.queryByLabelText('Signal strength before and after')).toBeNull();
    expect(screen.getByTitle('No impact on μ: the compared fit holds μ or hides it')).toBeTruthy();
  });

  it('shows a failed refit’s reason and no number', () => {
    stubServer(() => undefined);
    // a failed check may still carry the compared fit's own μ̂: it is not shown either
    renderPanel(check({ state: 'failed', failure: 'the fit of the changed model did not converge: no convergence after 200 Newton iterations', moved: [], focus: [], muError: null }));
    const alert = screen.getByRole('alert');
    expect(alert.textContent).toContain('gave no result, so no number is shown');
    expect(alert.textContent).toContain('no convergence after 200 Newton iterations');
    expect(screen.getByText('Refit failed')).toBeTruthy();
    expect(screen.queryByLabelText('Signal strength before and after')).toBeNull();
    expect(document.body.textContent).not.toContain('1.004');
  });

  it('says why a withheld check shows nothing, and that a running one is on its way', () => {
    stubServer(() => undefined);
    renderPanel(check({ state: 'withheld', mu: null, muError: null, focus: [], moved: [] }));
    expect(screen.getByText(/read the observed data of a region that is blinded now/)).toBeTruthy();
    expect(screen.queryByRole('table')).toBeNull();
    cleanup();
    renderPanel(check({ state: 'running', mu: null, muError: null, focus: [], moved: [], seconds: null }));
    expect(screen.getByRole('status').textContent).toMatch(/The server is refitting/);
    expect(screen.getByText('Refitting')).toBeTruthy();
  });
});

describe('pruning markers', () => {
  it('marks an entry in the register with its candidates and pruned effects, linking to the pruning screen', () => {
    stubServer(() => undefined);
    const summary = (key: string, pruning: EntrySummary['pruning']): EntrySummary => ({
      key,
      label: key,
      group: null,
      owner: null,
      state: 'draft',
      processes: [],
      regions: [],
      kinds: [],
      largestEffectPct: null,
      warnings: 0,
      openQuestions: 0,
      pruning,
      updatedAt: '2026-01-01T00:00:00Z',
    });
    renderWithApp(<RegisterTable slug="demo" entries={[summary('dead_cells', { candidates: 5, pruned: 0 }), summary('pileup', { candidates: 1, pruned: 2 }), summary('lumi', { candidates: 0, pruned: 0 })]} />);
    const table = screen.getByRole('table', { name: 'Register entries' });
    const dead = within(table).getByRole('link', { name: 'prune? 5: dead_cells, 5 effects the pruning rules propose' });
    expect(dead.getAttribute('href')).toBe('/a/demo/pruning');
    expect(dead.textContent).toBe('prune? 5');
    expect(within(table).getByRole('link', { name: 'pruned 2 prune? 1: pileup, 1 effect the pruning rules propose, 2 effects pruned' }).textContent).toBe('pruned 2prune? 1');
    expect(within(table).queryByRole('link', { name: /lumi,/ })).toBeNull();
  });

  it('marks a pruned effect on its entry’s page, saying what the fit keeps of it', () => {
    stubServer(() => undefined);
    const effect = (id: number, region: string, pruned: EntryDetail['effects'][number]['pruned']): EntryDetail['effects'][number] => ({
      id,
      region,
      process: 'bkg',
      kind: 'scale',
      up: 1.001,
      down: 0.999,
      nominal: [10, 5],
      edges: [0, 1, 2],
      warnings: [],
      precision: null,
      smoothing: null,
      pruned,
      upload: null,
      stale: null,
    });
    const none = { edit: false, upload: false, submit: false, accept: false, sendBack: false, retire: false, reopen: false, reassign: false };
    const entry = {
      key: 'pileup',
      label: 'Pile-up',
      group: null,
      owner: null,
      description: '',
      justification: '',
      references: [],
      state: 'draft',
      version: 1,
      createdAt: '2026-01-01T00:00:00Z',
      updatedAt: '2026-01-01T00:00:00Z',
      effects: [effect(1, 'CR', 'dropped'), effect(2, 'SR', 'normalisation'), effect(3, 'VR', null)],
      revisions: [],
      impactCheck: null,
      can: none,
    } as EntryDetail;
    renderWithApp(<EffectsList slug="demo" entry={entry} regions={new Map()} processLabels={new Map()} />);
    const card = (region: string) => screen.getByRole('article', { name: `Effect on ${region} × bkg` });
    expect(within(card('CR')).getByText('Pruned')).toBeTruthy();
    expect(within(card('CR')).getByText(/Left out of frozen versions/)).toBeTruthy();
    expect(within(card('SR')).getByText('Pruned to its normalisation')).toBeTruthy();
    expect(within(card('SR')).getByRole('link', { name: 'see pruning' }).getAttribute('href')).toBe('/a/demo/pruning');
    expect(within(card('VR')).queryByText(/Pruned/)).toBeNull();
  });
});
