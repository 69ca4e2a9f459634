// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { ReviewComparison, ReviewSetDetail } from '@shared/schemas/review-sets';
import { ReviewSetRoute } from '../../src/app/routes/analysis/review-set';
import { FitsRoute } from '../../src/app/routes/analysis/fits';
import { DiagnosisWithQuestions } from '../../src/app/routes/analysis/fit-views/diagnosis';
import { extremes, moves } from '../../src/features/review-sets/components/pulls-grid';
import { convergedResult, fitSummary, overview } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';
import { diagnosis } from './review-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

type Row = ReviewComparison['rows'][number];
const row = (variant: string, title: string, fitId: number, o: Partial<Row> = {}): Row => ({
  variant,
  title,
  fitId,
  state: 'succeeded',
  status: 'converged',
  note: null,
  mu: { value: 1, error: 0.3, low: -0.28, high: 0.33, fixed: false },
  z: 3.5,
  limit: null,
  expectedFrom: 'control',
  warnings: 0,
  ...o,
});

/** A blinded set of four: control only, expected at μ = 1 (with a warning), μ hidden, and a held group that failed. */
function detail(): ReviewSetDetail {
  const rows = [
    row('control-only', 'Control regions only', 11, { mu: { value: 0, error: null, low: null, high: null, fixed: true }, z: null, expectedFrom: 'prefit' }),
    row('expected-1', 'Expected at μ = 1, background from the control regions', 12, { warnings: 2 }),
    row('hidden-mu', 'All regions, μ hidden', 13, { mu: null, z: null, note: 'μ hidden: pulls and constraints only' }),
    // a member that did not converge: even a number sent by mistake is not shown
    row('held:theory', 'Held: theory', 14, { state: 'failed', status: 'failed', mu: { value: 9.99, error: 0.1, low: null, high: null, fixed: false }, z: 7.77, note: 'The Hessian is singular.' }),
  ];
  const cell = (pull: number, constraint: number | null, fixed = false) => ({ pull, constraint, fixed });
  const parameters: ReviewComparison['parameters'] = [
    { name: 'flare_id', group: 'identification', cells: [cell(0.1, 0.9), cell(0.8, 0.85), cell(0.05, 0.6), null], pullSpread: 0.75, constraintSpread: 0.3, moves: true },
    { name: 'lumi', group: 'luminosity', cells: [cell(0.1, 0.95), cell(0.2, 0.9), cell(0.15, 0.92), null], pullSpread: 0.1, constraintSpread: 0.05, moves: false },
    { name: 'scale_mu_r', group: 'theory', cells: [cell(0, 1), cell(0.3, 0.98), cell(0.1, 0.97, false), null], pullSpread: 0.3, constraintSpread: 0.03, moves: false },
  ];
  return {
    id: 3,
    label: 'Before asking to unblind',
    version: 2,
    blinded: true,
    createdAt: '2026-03-01T09:00:00Z',
    createdBy: 'Otto Brannholm',
    state: 'failed',
    progress: 1,
    members: [],
    comparison: {
      rows,
      variants: rows.map((r) => r.variant),
      parameters,
      decorrelation: [{ variant: 'expected-1', fitId: 12, reports: [{ parameter: 'flare_id', by: 'region', parts: [{ name: 'flare_id/CR-low', where: 'CR-low', value: 0.6, error: 0.4 }, { name: 'flare_id/SR-core', where: 'SR-core', value: -0.9, error: 0.5 }], average: 0.01, chi2: 5.4, dof: 1, p: 0.02 }] }],
      breakdown: [{ variant: 'expected-1', fitId: 12, rows: [{ group: 'theory', up: 0.12, down: 0.1, flagged: false, schur: 0.11 }, { group: 'all systematics', up: 0.2, down: 0.19, flagged: false, schur: 0.2 }] }],
    },
  };
}

function renderSet() {
  stubServer((_method, url) => (url === '/api/analyses/demo/review-sets/3' ? json(200, detail()) : undefined));
  return renderWithApp(<ReviewSetRoute />, '/a/demo/review-sets/3', '/a/:slug/review-sets/:setId');
}

describe('a review set side by side', () => {
  it('shows each member with its state and convergence, μ̂ only from converged fits, and says what the set is for', async () => {
    renderSet();
    const table = await screen.findByRole('table', { name: 'Fits of the set' });
    const rows = within(table).getAllByRole('row').slice(1);
    expect(rows.map((r) => within(r).getAllByRole('link')[0].textContent)).toEqual(['Control only', 'Expected, μ = 1', 'μ hidden', 'theory held']);
    expect(within(rows[0]).getByRole('link', { name: 'Control only' }).getAttribute('href')).toBe('/a/demo/fits/11');
    expect(rows[0].textContent).toContain('held at 0.00');
    expect(rows[1].textContent).toContain('1.00 ± 0.30');
    expect(rows[1].textContent).toContain('3.50 σ');
    expect(rows[1].textContent).toContain('2 warnings');
    expect(rows[1].textContent).toContain('⚠ 2');
    expect(rows[2].textContent).toContain('hidden');
    expect(rows[2].textContent).toContain('μ hidden: pulls and constraints only');
    expect(rows[3].textContent).toContain('Not converged');
    expect(rows[3].textContent).not.toContain('9.99');
    expect(rows[3].textContent).not.toContain('7.77');
    expect(screen.getByText(/These fits inform the collaboration’s own statistical review; they do not replace it/)).toBeTruthy();
  });

  it('lists only the parameters that move until asked for all, and moves the line with the thresholds', async () => {
    const user = userEvent.setup();
    renderSet();
    const grid = await screen.findByRole('table', { name: 'Pulls and constraints across the set' });
    const names = () => within(grid).getAllByRole('rowheader').map((h) => h.textContent);
    expect(names()).toEqual([expect.stringContaining('flare_id')]);
    // the cells at the ends of flare_id's range are marked, each number opens its diagnosis in that fit
    const link = within(grid).getByRole('link', { name: 'flare_id in Expected, μ = 1: pull +0.80' });
    expect(link.getAttribute('href')).toBe('/a/demo/fits/12/diagnostics?parameter=flare_id');
    expect(link.closest('td')!.className).toContain('bg-amber-soft');
    await user.click(screen.getByRole('radio', { name: 'All (3)' }));
    expect(names()).toHaveLength(3);
    await user.click(screen.getByRole('radio', { name: /That move/ }));
    await user.click(screen.getByRole('radio', { name: '0.25' }));
    expect(names()).toEqual([expect.stringContaining('flare_id'), expect.stringContaining('scale_mu_r')]);
    // the failed member's column says so in its header, and has no numbers
    expect(within(grid).getAllByRole('columnheader').map((h) => h.textContent)).toContain('theory heldnot converged');
  });

  it('shows the decorrelation χ² and p with a word where the parts disagree, and the breakdown by freezing', async () => {
    renderSet();
    const dec = await screen.findByRole('table', { name: 'Decorrelation tests' });
    expect(dec.textContent).toContain('5.40 / 1');
    expect(dec.textContent).toContain('parts disagree');
    expect(dec.textContent).toContain('CR-low');
    const breakdown = screen.getByRole('table', { name: 'Uncertainty breakdown, Expected, μ = 1' });
    expect(within(breakdown).getAllByRole('rowheader').map((h) => h.textContent)).toEqual(['theory', 'all systematics']);
  });
});

describe('the threshold rule of the grid', () => {
  const p = detail().comparison.parameters[0];
  it('moves when either spread passes its threshold', () => {
    expect(moves(p, { pull: 0.5, constraint: 0.5 })).toBe(true);
    expect(moves(p, { pull: 1, constraint: 0.2 })).toBe(true);
    expect(moves(p, { pull: 1, constraint: 0.5 })).toBe(false);
  });
  it('marks the ends of each range that moves, never a held or missing cell', () => {
    expect([...extremes(p, { pull: 0.5, constraint: 0.5 })].sort()).toEqual([1, 2]);
    expect([...extremes(p, { pull: 0.5, constraint: 0.2 })].sort()).toEqual([0, 1, 2]);
    expect(extremes(p, { pull: 1, constraint: 1 }).size).toBe(0);
  });
});

describe('checks from the diagnosis', () => {
  it('runs the checks of the parameter and lists their states with links to their fits', async () => {
    const user = userEvent.setup();
    const checks = [
      { ...fitSummary({ id: 21, label: 'jes split by region', state: 'running', progress: 0.4, headline: null }), variant: 'decorrelate:jes' },
      { ...fitSummary({ id: 22, label: 'jes with k_bkg held', state: 'queued', progress: 0, headline: null }), variant: 'partner:k_bkg' },
    ];
    const calls = stubServer((method, url) => {
      if (url === '/api/analyses/demo/fits/7/diagnosis/jes/checks' && method === 'POST') return json(202, checks);
      if (url === '/api/analyses/demo/questions?entry=jes') return json(200, []);
      return undefined;
    });
    const result = convergedResult();
    renderWithApp(<DiagnosisWithQuestions slug="demo" diagnosis={diagnosis()} result={result} yields={result.yields} mayRaise={false} mayRun />);
    expect(screen.getByText('No check of jes has been run from this fit.')).toBeTruthy();
    await user.click(screen.getByRole('button', { name: 'Check this parameter' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url === '/api/analyses/demo/fits/7/diagnosis/jes/checks')).toBe(true));
    const list = await screen.findByRole('list', { name: 'Checks of jes' });
    const items = within(list).getAllByRole('listitem');
    expect(within(items[0]).getByRole('link', { name: 'jes split by region' }).getAttribute('href')).toBe('/a/demo/fits/21');
    expect(within(items[0]).getByRole('progressbar').getAttribute('aria-valuenow')).toBe('40');
    expect(items[1].textContent).toContain('Queued');
    // while a check runs, it is not asked for again
    expect((screen.getByRole('button', { name: 'Check this parameter' }) as HTMLButtonElement).disabled).toBe(true);
  });

  it('lists checks already run, with their states and links, and no button for a reader', () => {
    stubServer((_m, url) => (url === '/api/analyses/demo/questions?entry=jes' ? json(200, []) : undefined));
    const d = diagnosis({
      checks: [
        { ...fitSummary({ id: 21, label: 'jes split by region', headline: { mu: 1.1, muError: 0.3, z: 3, warnings: 1 } }), variant: 'decorrelate:jes' },
        { ...fitSummary({ id: 22, label: 'jes with k_bkg held', state: 'failed', failure: 'The Hessian is singular.', headline: null }), variant: 'partner:k_bkg' },
      ],
    });
    const result = convergedResult();
    renderWithApp(<DiagnosisWithQuestions slug="demo" diagnosis={d} result={result} yields={result.yields} mayRaise={false} mayRun={false} />);
    const list = screen.getByRole('list', { name: 'Checks of jes' });
    const items = within(list).getAllByRole('listitem');
    expect(within(items[0]).getByRole('link', { name: 'jes split by region' }).getAttribute('href')).toBe('/a/demo/fits/21');
    expect(items[0].textContent).toContain('jes split');
    expect(items[0].textContent).toContain('μ̂ = 1.10 ± 0.30');
    expect(items[0].textContent).toContain('⚠ 1');
    expect(items[1].textContent).toContain('Failed');
    expect(items[1].textContent).toContain('The Hessian is singular.');
    expect(screen.queryByRole('button', { name: 'Check this parameter' })).toBeNull();
  });
});

describe('review sets on the fits page', () => {
  const version = { number: 2, note: '', forApproval: false, sha256: 'ab'.repeat(32), createdAt: '2026-03-01T09:00:00Z', createdBy: null, counts: { regions: 2, processes: 2, systematics: 2 } };
  function serve(role: 'analyst' | 'reader') {
    const summary = { ...detail(), comparison: undefined, state: 'running' as const, progress: 0.5, members: [{ ...fitSummary({ id: 11, state: 'running' }), variant: 'control-only', title: 'Control regions only' }, { ...fitSummary({ id: 12 }), variant: 'expected-1', title: 'Expected' }] };
    return stubServer((method, url, body) => {
      if (url === '/api/analyses/demo') return json(200, overview(role, 'blinded'));
      if (url === '/api/analyses/demo/fits') return json(200, []);
      if (url === '/api/analyses/demo/versions') return json(200, [version]);
      if (url === '/api/analyses/demo/review-sets' && method === 'GET') return json(200, [summary]);
      if (url === '/api/analyses/demo/review-sets' && method === 'POST') return json(202, { ...detail(), id: 4, ...(body as object) });
      return undefined;
    });
  }

  it('lists the sets with their progress, and starts one on the chosen version for those who run fits', async () => {
    const calls = serve('analyst');
    const user = userEvent.setup();
    const { router } = renderWithApp(<FitsRoute />, '/a/demo/fits', '/a/:slug/fits');
    const table = await screen.findByRole('table', { name: 'Review sets' });
    expect(within(table).getByRole('link', { name: 'Before asking to unblind' }).getAttribute('href')).toBe('/a/demo/review-sets/3');
    expect(within(table).getByRole('progressbar').getAttribute('aria-valuetext')).toBe('50 %, 1 of 2 fits ended');
    const form = screen.getByRole('form', { name: 'Start a review set' });
    expect(form.textContent).toContain('every region with μ hidden (the analysis is blinded)');
    await user.type(within(form).getByLabelText('Label of the set'), 'second look');
    await user.click(within(form).getByRole('button', { name: 'Start the review set' }));
    await waitFor(() => expect(router.state.location.pathname).toBe('/a/demo/review-sets/4'));
    expect(calls.find((c) => c.method === 'POST' && c.url === '/api/analyses/demo/review-sets')!.body).toEqual({ version: 2, label: 'second look' });
  });

  it('gives a reader the list and no button', async () => {
    serve('reader');
    renderWithApp(<FitsRoute />, '/a/demo/fits', '/a/:slug/fits');
    await screen.findByRole('table', { name: 'Review sets' });
    expect(screen.queryByRole('form', { name: 'Start a review set' })).toBeNull();
  });
});
