// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider } from 'react-router';
import type { FitResult } from '@shared/schemas/fit';
import { ImpactTable } from '../../src/features/fits/components/impact-table';
import { PullsView, sortPulls } from '../../src/features/fits/components/pulls-view';
import { groupBars } from '../../src/features/fits/components/groups-view';
import { rankByImpact } from '../../src/features/fits/result-helpers';
import { convergedResult, nuisance } from './fit-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderImpacts(result: FitResult) {
  const router = createMemoryRouter(
    [
      { path: '/a/demo/fits/7/impacts', element: <ImpactTable slug="demo" fitId={7} result={result} /> },
      { path: '/a/demo/fits/7/diagnostics', element: <p>diagnosis page</p> },
    ],
    { initialEntries: ['/a/demo/fits/7/impacts'] },
  );
  render(<RouterProvider router={router} />);
  return router;
}

const names = (table: HTMLElement) =>
  within(table)
    .getAllByRole('row')
    .slice(1)
    .map((r) => within(r).getAllByRole('link')[0]?.textContent);

describe('the impact ranking', () => {
  it('ranks the free parameters by the larger post-fit Δμ, leaving held ones out', () => {
    renderImpacts(convergedResult());
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    // theory_scale 0.10 > jes 0.06 > lumi 0.021; jes_flavour is held
    expect(names(table)).toEqual(['theory_scale', 'jes', 'lumi']);
    expect(screen.getByText(/Ranked by post-fit impact/)).toBeTruthy();
    expect(screen.getByText(/1 held at their start value/)).toBeTruthy();
  });

  it('ranks by the quick estimate, and says so, when the fit had quick impacts only', () => {
    const base = convergedResult();
    const quick = { ...base, nuisance: base.nuisance.map((n) => ({ ...n, postfitImpact: null, prefitImpact: null })) };
    renderImpacts(quick);
    expect(names(screen.getByRole('table', { name: 'Impact ranking' }))).toEqual(['theory_scale', 'jes', 'lumi']);
    expect(screen.getByText(/Ranked by quick impact ρ\(μ, θ\)·σ_μ, an estimate/)).toBeTruthy();
    expect(screen.getByRole('columnheader', { name: /quick estimate/ })).toBeTruthy();
  });

  it('shows the top N and filters by group', async () => {
    const user = userEvent.setup();
    const many = convergedResult({
      nuisance: Array.from({ length: 30 }, (_, i) => nuisance(`p${String(i).padStart(2, '0')}`, { group: i % 2 ? 'odd' : 'even', postfitImpact: { up: (i + 1) / 100, down: -(i + 1) / 200 } })),
    });
    renderImpacts(many);
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    expect(names(table)).toHaveLength(20);
    expect(names(table)[0]).toBe('p29');
    await user.selectOptions(screen.getByLabelText('Show'), 'top 10');
    expect(names(table)).toHaveLength(10);
    await user.selectOptions(screen.getByLabelText('Group'), 'even');
    expect(names(table)).toEqual(['p28', 'p26', 'p24', 'p22', 'p20', 'p18', 'p16', 'p14', 'p12', 'p10']);
    await user.selectOptions(screen.getByLabelText('Show'), 'all');
    expect(names(table)).toHaveLength(15);
  });

  it('opens the diagnosis of a parameter when its row is clicked', async () => {
    const user = userEvent.setup();
    const router = renderImpacts(convergedResult());
    const row = screen.getAllByRole('row')[2];
    await user.click(within(row).getAllByRole('cell')[2]);
    expect(router.state.location.pathname).toBe('/a/demo/fits/7/diagnostics');
    expect(router.state.location.search).toBe('?parameter=jes');
  });

  it('sorts by a column when its header is pressed, numbers largest first', async () => {
    const user = userEvent.setup();
    renderImpacts(convergedResult());
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    await user.click(within(table).getByRole('button', { name: /^Pull/ }));
    expect(names(table)).toEqual(['jes', 'theory_scale', 'lumi']);
    expect(within(table).getByRole('columnheader', { name: /^Pull/ }).getAttribute('aria-sort')).toBe('descending');
    await user.click(within(table).getByRole('button', { name: /^Pull/ }));
    expect(names(table)).toEqual(['lumi', 'theory_scale', 'jes']);
  });
});

describe('the pulls chart', () => {
  it('opens the diagnosis of a parameter from the keyboard: one tab stop, the arrow keys move, Enter opens', async () => {
    const user = userEvent.setup();
    const result = convergedResult();
    const router = createMemoryRouter(
      [
        { path: '/a/demo/fits/7/pulls', element: <PullsView slug="demo" fitId={7} result={result} /> },
        { path: '/a/demo/fits/7/diagnostics', element: <p>diagnosis page</p> },
      ],
      { initialEntries: ['/a/demo/fits/7/pulls'] },
    );
    render(<RouterProvider router={router} />);
    const order = sortPulls(result.nuisance, 'group').map((n) => n.name);
    const chart = screen.getByRole('img', { name: /^Pulls and constraints: .* arrow keys/ });
    expect(chart.getAttribute('tabindex')).toBe('0');
    chart.focus();
    expect(await screen.findByText(new RegExp(`^${order[0]}: pull`))).toBeTruthy();
    await user.keyboard('{ArrowDown}');
    expect(await screen.findByText(new RegExp(`^${order[1]}: pull`))).toBeTruthy();
    await user.keyboard('{Enter}');
    await screen.findByText('diagnosis page');
    expect(router.state.location.search).toBe(`?parameter=${order[1]}`);
  });
});

describe('ordering and summing for the other views', () => {
  it('sorts pulls by |pull|, by constraint and by |normalised pull| with missing values last', () => {
    const list = convergedResult().nuisance;
    expect(sortPulls(list, 'absPull').map((n) => n.name)).toEqual(['lumi', 'jes', 'theory_scale', 'jes_flavour']);
    expect(sortPulls(list, 'constraint').map((n) => n.name)).toEqual(['jes', 'lumi', 'theory_scale', 'jes_flavour']);
    expect(sortPulls(list, 'normalisedPull').map((n) => n.name)).toEqual(['lumi', 'jes', 'jes_flavour', 'theory_scale']);
  });

  it('puts parameters without an impact last in the ranking', () => {
    const list = [nuisance('a', { postfitImpact: null }), nuisance('b', { postfitImpact: { up: null, down: -0.3 } }), nuisance('c')];
    expect(rankByImpact(list, 'postfit').map((n) => n.name)).toEqual(['b', 'c', 'a']);
  });

  it('lists σ_μ, its statistical and systematic parts, then the groups by size', () => {
    expect(groupBars(convergedResult()).map((b) => [b.label, b.value])).toEqual([
      ['Total σ_μ', 0.3],
      ['Statistical', 0.25],
      ['Systematic (all)', 0.166],
      ['theory', 0.09],
      ['jets', 0.06],
    ]);
  });
});
