// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider } from 'react-router';
import type { FitResult } from '@shared/schemas/fit';
import { ImpactRanking } from '../../src/features/fits/components/impact-ranking';
import { PullsView, sortPulls } from '../../src/features/fits/components/pulls-view';
import { groupBars } from '../../src/features/fits/components/groups-view';
import { cutByShare, rankByImpact, sharesOf, symmetricImpact, warningsNaming } from '../../src/features/fits/result-helpers';
import { convergedResult, nuisance } from './fit-fixtures';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function renderImpacts(result: FitResult) {
  const router = createMemoryRouter(
    [
      { path: '/a/demo/fits/7/impacts', element: <ImpactRanking slug="demo" fitId={7} result={result} /> },
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

/** What the cut keeps, in words. */
const kept = () => screen.getByRole('status', { name: 'What the cut keeps' }).textContent;

/** The text of one column's body cells, found by its header. */
const column = (table: HTMLElement, header: string) => {
  const headers = within(table).getAllByRole('columnheader');
  const i = headers.findIndex((h) => h.textContent?.startsWith(header));
  return within(table)
    .getAllByRole('row')
    .slice(1)
    .map((r) => r.querySelectorAll('th, td')[i]?.textContent);
};

describe('the impact ranking', () => {
  // σ_μ = 0.3. Symmetric post-fit impacts s = (|Δμ⁺| + |Δμ⁻|)/2: theory_scale 0.09, jes 0.0575, lumi 0.0205,
  // so the shares s²/σ_μ² are 9.0 %, 3.7 % and 0.5 %, running 9.0, 12.7 and 13.1 % (13.14 % together).
  it('ranks the free parameters by the larger post-fit Δμ, leaving held ones out and saying so', async () => {
    const user = userEvent.setup();
    renderImpacts(convergedResult());
    await user.click(screen.getByRole('radio', { name: 'all' }));
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    // theory_scale 0.10 > jes 0.06 > lumi 0.021; jes_flavour is held
    expect(names(table)).toEqual(['theory_scale', 'jes', 'lumi']);
    expect(screen.getByText(/1 held at its start value, not ranked/)).toBeTruthy();
  });

  it('gives each row its share of σ_μ² and the running share, with the symmetric impact they come from', async () => {
    const user = userEvent.setup();
    renderImpacts(convergedResult());
    await user.click(screen.getByRole('radio', { name: 'all' }));
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    expect(column(table, 'Impact ±s')).toEqual(['±0.0900', '±0.0575', '±0.0205']);
    expect(column(table, 'Share of σ_μ²')).toEqual(['9.0 %', '3.7 %', '0.5 %']);
    expect(column(table, 'Cumulative')).toEqual(['9.0 %', '12.7 %', '13.1 %']);
    // the definition is on hover of the header
    expect(within(table).getByRole('button', { name: /Share of σ_μ²/ }).getAttribute('title')).toMatch(/s = \(\|Δμ⁺\| \+ \|Δμ⁻\|\)\/2/);
    expect(screen.getByText(/statistics alone/).textContent).toContain('69.4 %');
  });

  it('cuts the rows where the running share reaches the chosen part of what the listed parameters hold, 90 % by default', async () => {
    const user = userEvent.setup();
    renderImpacts(convergedResult());
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    expect((screen.getByRole('radio', { name: '90 %' }) as HTMLInputElement).checked).toBe(true);
    // 90 % of 13.14 % is 11.8 %: theory_scale alone holds 9.0 %, with jes 12.7 %
    expect(names(table)).toEqual(['theory_scale', 'jes']);
    expect(kept()).toMatch(/^2 of 3 parameters hold 12\.7 % of σ_μ²: 96 % of the 13\.1 %/);
    expect(screen.getByText(/Below the cut: 1 parameter, together 0\.5 % of σ_μ²/)).toBeTruthy();

    await user.click(screen.getByRole('radio', { name: '50 %' }));
    expect(names(table)).toEqual(['theory_scale']);
    expect(kept()).toMatch(/^1 of 3 parameters hold 9\.0 % of σ_μ²/);

    await user.click(screen.getByRole('button', { name: 'Show all 3' }));
    expect(names(table)).toEqual(['theory_scale', 'jes', 'lumi']);
    expect((screen.getByRole('radio', { name: 'all' }) as HTMLInputElement).checked).toBe(true);
  });

  it('says which of the kept parameters the data constrained or moved', () => {
    renderImpacts(convergedResult());
    // jes (σ̂ 0.40) is kept; lumi (pull −1.4) is below the cut
    expect(screen.getByText(/Constrained below 0\.5:/).textContent).toMatch(/jes \(σ̂ 0\.40\)/);
    expect(screen.getByText(/None was moved beyond 1 prior width/)).toBeTruthy();
  });

  it('cuts within a group by what the group holds', async () => {
    const user = userEvent.setup();
    const many = convergedResult({
      nuisance: Array.from({ length: 30 }, (_, i) => nuisance(`p${String(i).padStart(2, '0')}`, { group: i % 2 ? 'odd' : 'even', postfitImpact: { up: (i + 1) / 100, down: -(i + 1) / 100 } })),
    });
    renderImpacts(many);
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    await user.selectOptions(screen.getByLabelText('Group'), 'even');
    await user.click(screen.getByRole('radio', { name: 'all' }));
    expect(names(table)).toEqual(['p28', 'p26', 'p24', 'p22', 'p20', 'p18', 'p16', 'p14', 'p12', 'p10', 'p08', 'p06', 'p04', 'p02', 'p00']);
    // the rank stays the one among every parameter
    expect(within(table).getAllByRole('row')[1].textContent).toMatch(/^2p28/);
    await user.click(screen.getByRole('radio', { name: '50 %' }));
    // shares ∝ (i+1)² over the even i: 29², 27², 25², … the first four hold 50.8 % of the group's total
    expect(names(table)).toEqual(['p28', 'p26', 'p24', 'p22']);
    expect(kept()).toContain('the parameters of even hold together');
  });

  it('ranks by the quick estimate, and says so, when the fit had quick impacts only', () => {
    const base = convergedResult();
    const quick = { ...base, nuisance: base.nuisance.map((n) => ({ ...n, postfitImpact: null, prefitImpact: null })) };
    renderImpacts(quick);
    expect(screen.getByRole('note').textContent).toMatch(/^Quick impacts: this fit ran no refits/);
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    // |ρσ_μ|: 0.09, 0.05, 0.02 → shares 9.0, 2.8, 0.4 %; 90 % of 12.2 % is 11.0 %
    expect(names(table)).toEqual(['theory_scale', 'jes']);
    expect(column(table, 'Share of σ_μ²')).toEqual(['9.0 %', '2.8 %']);
    expect(within(table).getByRole('columnheader', { name: /quick estimate/ })).toBeTruthy();
    expect(within(table).getAllByRole('img', { name: /, estimated$/ })).toHaveLength(2);
  });

  it('lists pulls and constraints by name when the fit ran without impacts, with no cut', () => {
    const base = convergedResult();
    renderImpacts({ ...base, nuisance: base.nuisance.map((n) => ({ ...n, postfitImpact: null, prefitImpact: null, quickImpact: null })) });
    expect(screen.getByText(/run without impacts/)).toBeTruthy();
    expect(screen.queryByRole('radio')).toBeNull();
    expect(names(screen.getByRole('table', { name: 'Impact ranking' }))).toEqual(['jes', 'lumi', 'theory_scale']);
  });

  it('draws one signed range per row with the pre-fit range as ticks, and no up/down pair of bars', () => {
    renderImpacts(convergedResult());
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    const jes = within(table).getByRole('img', { name: 'Δμ from +0.055 (θ lowered) to −0.060 (θ raised)' });
    expect(jes.querySelector('title')?.textContent).toMatch(/Pre-fit, θ at θ̂ ± 1 \(the ticks\): −0\.1200 \/ \+0\.1100/);
    // one bar, two end marks and two ticks beside the zero line
    expect(jes.querySelectorAll('rect')).toHaveLength(1);
    expect(jes.querySelectorAll('circle')).toHaveLength(2);
    expect(jes.querySelectorAll('line')).toHaveLength(3);
  });

  it('flags a parameter named by a convergence warning, and marks a one-sided impact', async () => {
    const user = userEvent.setup();
    const base = convergedResult();
    renderImpacts({
      ...base,
      convergence: { ...base.convergence, warnings: ['The refit for lumi lowered did not converge on any rung; its impact is left empty.', 'jes_flavour has a tiny effect.'] },
      nuisance: base.nuisance.map((n) => (n.name === 'lumi' ? { ...n, postfitImpact: { up: 0.02, down: null } } : n)),
    });
    await user.click(screen.getByRole('radio', { name: 'all' }));
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    expect(within(table).getByRole('img', { name: /^1 convergence warning on lumi: The refit for lumi lowered/ })).toBeTruthy();
    // jes is not jes_flavour
    expect(within(table).queryByRole('img', { name: /convergence warning on jes/ })).toBeNull();
    expect(column(table, 'Impact ±s')[2]).toBe('±0.0200*');
  });

  it('opens the diagnosis of a parameter from its link and from a click on its row', async () => {
    const user = userEvent.setup();
    const router = renderImpacts(convergedResult());
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    expect(within(table).getByRole('link', { name: 'theory_scale' }).getAttribute('href')).toBe('/a/demo/fits/7/diagnostics?parameter=theory_scale');
    const row = within(table).getAllByRole('row')[2];
    await user.click(within(row).getAllByRole('cell')[2]);
    expect(router.state.location.pathname).toBe('/a/demo/fits/7/diagnostics');
    expect(router.state.location.search).toBe('?parameter=jes');
  });

  it('sorts the kept rows by a column when its header is pressed, and back by rank from the impact column', async () => {
    const user = userEvent.setup();
    renderImpacts(convergedResult());
    await user.click(screen.getByRole('radio', { name: 'all' }));
    const table = screen.getByRole('table', { name: 'Impact ranking' });
    await user.click(within(table).getByRole('button', { name: /^Pull/ }));
    expect(names(table)).toEqual(['lumi', 'jes', 'theory_scale']);
    expect(within(table).getByRole('columnheader', { name: /^Pull/ }).getAttribute('aria-sort')).toBe('descending');
    await user.click(within(table).getByRole('button', { name: /^Constraint/ }));
    expect(names(table)).toEqual(['theory_scale', 'lumi', 'jes']);
    await user.click(within(table).getByRole('button', { name: /^Δμ as θ moves/ }));
    expect(names(table)).toEqual(['theory_scale', 'jes', 'lumi']);
  });

  it('draws the same rows as a figure with SVG and PNG downloads', () => {
    renderImpacts(convergedResult());
    const figure = screen.getByRole('img', { name: /^Impact ranking: 2 of 3 parameters: 12\.7 % of σ_μ²/ });
    expect(figure.textContent).toContain('theory_scale');
    expect(figure.textContent).not.toContain('lumi');
    expect(figure.textContent).toContain('1 more parameter below the cut');
    expect(screen.getByRole('button', { name: 'Download Impact ranking as SVG' })).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Download Impact ranking as PNG' })).toBeTruthy();
  });
});

describe('shares of σ_μ² and the cut', () => {
  it('takes the symmetric impact from both refits, one side when the other is missing, and |ρσ_μ| for quick impacts', () => {
    expect(symmetricImpact(nuisance('a', { postfitImpact: { up: 0.03, down: -0.01 } }), 'postfit')).toEqual({ value: 0.02, partial: false });
    expect(symmetricImpact(nuisance('a', { postfitImpact: { up: null, down: -0.04 } }), 'postfit')).toEqual({ value: 0.04, partial: true });
    expect(symmetricImpact(nuisance('a', { postfitImpact: { up: null, down: null } }), 'postfit')).toBeNull();
    expect(symmetricImpact(nuisance('a', { quickImpact: -0.07 }), 'quick')).toEqual({ value: 0.07, partial: false });
  });

  it('keeps the row whose running share reaches the level, every row at 100 %, and all when nothing has a share', () => {
    const list = [0.4, 0.2, 0.1, 0.05].map((v, i) => nuisance(`p${i}`, { postfitImpact: { up: v, down: -v } }));
    const rows = sharesOf(list, 'postfit', 1);
    [0.16, 0.2, 0.21, 0.2125].forEach((v, i) => expect(rows[i].cumulative).toBeCloseTo(v, 12));
    expect(cutByShare(rows, 0.5).kept).toBe(1);
    expect(cutByShare(rows, 0.9).kept).toBe(2);
    expect(cutByShare(rows, 0.95).kept).toBe(3);
    expect(cutByShare(rows, 1).kept).toBe(4);
    // exactly at a level: the row that reaches it, no more
    expect(cutByShare(rows, 0.2 / 0.2125).kept).toBe(2);
    expect(cutByShare(sharesOf(list, 'postfit', null), 0.9)).toMatchObject({ kept: 4, total: 0 });
  });

  it('finds the warnings that name a parameter as a whole word', () => {
    expect(warningsNaming(['jes_flavour is held.', 'The refit for jes raised failed.', 'xjes'], 'jes')).toEqual(['The refit for jes raised failed.']);
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
