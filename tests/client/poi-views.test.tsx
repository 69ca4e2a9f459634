// @vitest-environment happy-dom
import { afterEach, describe, expect, it, vi } from 'vitest';
import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { createMemoryRouter, RouterProvider, useSearchParams } from 'react-router';
import { fitOptionsSchema, type FitResult } from '@shared/schemas/fit';
import type { ModelVersion } from '@shared/schemas/fits';
import { ContourChart, clWords, contourLevelStyle } from '../../src/components/charts/contour-chart';
import { ImpactRanking } from '../../src/features/fits/components/impact-ranking';
import { intervalText, PoiPanel } from '../../src/features/fits/components/poi-panel';
import { StartFitForm } from '../../src/features/fits/components/start-fit-form';
import { SummaryView } from '../../src/features/fits/components/summary-view';
import { chosenPoi, impactsFor, MU_WORDS, poiCorrelation, poiSymbol, poiWords } from '../../src/features/fits/poi';
import { ImpactsWithQuestions } from '../../src/app/routes/analysis/fit-views/questions';
import { FitResultRoute } from '../../src/app/routes/analysis/fit-result';
import { convergedResult, fitDetail, overview, twoPoiResult } from './fit-fixtures';
import { json, renderWithApp, stubServer } from './helpers';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

describe('the words and the switch of a parameter of interest', () => {
  it('writes μ for mu, μ_x for mu_x and any other key as it is', () => {
    expect(poiSymbol('mu')).toBe('μ');
    expect(poiSymbol('mu_assoc')).toBe('μ_assoc');
    expect(poiSymbol('r_vbf')).toBe('r_vbf');
    expect(poiWords('mu')).toBe(MU_WORDS);
    expect(poiWords('mu_assoc')).toMatchObject({ sym: 'μ_assoc', hat: 'μ̂_assoc', delta: 'Δμ_assoc', sigma: 'σ(μ_assoc)' });
  });

  it('takes a chosen parameter only when the result has it', () => {
    const r = twoPoiResult();
    expect(chosenPoi(r, 'mu_assoc')).toBe('mu_assoc');
    expect(chosenPoi(r, 'nonsense')).toBe('mu');
    expect(chosenPoi(r, null)).toBe('mu');
    expect(chosenPoi(convergedResult(), 'mu_assoc')).toBe('mu');
  });

  it('leaves the result as it is for μ', () => {
    const r = twoPoiResult();
    const on = impactsFor(r, 'mu');
    expect(on.result).toBe(r);
    expect(on.words).toBe(MU_WORDS);
  });

  it('puts the chosen parameter’s impacts, best fit and σ where the ranking reads μ’s', () => {
    const on = impactsFor(twoPoiResult(), 'mu_assoc');
    expect(on.poi).toBe('mu_assoc');
    expect(on.label).toBe('Associated strength');
    const lumi = on.result.nuisance.find((n) => n.name === 'lumi')!;
    expect(lumi.postfitImpact).toEqual({ up: 0.25, down: -0.24 });
    expect(lumi.quickImpact).toBe(0.2);
    expect(lumi.pull).toBe(-1.4); // the pull is the parameter's own, whichever strength is chosen
    const mu = on.result.summary!.mu;
    expect(mu.value).toBe(0.8);
    expect(mu.error).toBe(0.5);
    // the result's intervals are absolute, the summary's offsets from the best fit
    expect(mu.interval68!.low).toBeCloseTo(-0.49, 12);
    expect(mu.interval68!.high).toBeCloseTo(0.52, 12);
    expect(mu.interval95).toEqual({ low: expect.closeTo(-1, 12), high: null });
    expect(mu.stat).toBeNull();
    expect(on.result.groupedImpacts).toEqual([]);
  });

  it('gives no impacts on a parameter whose impacts were not computed', () => {
    const r = twoPoiResult();
    r.poi!.list[1].impacts = null;
    const on = impactsFor(r, 'mu_assoc');
    expect(on.result.nuisance.every((n) => n.quickImpact === null && n.postfitImpact === null && n.prefitImpact === null)).toBe(true);
  });

  it('reads ρ between two parameters of interest', () => {
    const r = twoPoiResult();
    expect(poiCorrelation(r.poi!, 'mu', 'mu_assoc')).toBe(-0.42);
    expect(poiCorrelation(r.poi!, 'mu', 'k_bkg')).toBeNull();
  });

  it('writes an interval with "bound" for an end past the range', () => {
    expect(intervalText({ low: -0.2, high: null }, 2)).toBe('[−0.20, bound]');
    expect(intervalText(null, 2)).toBe('–');
  });
});

describe('the parameters-of-interest panel', () => {
  it('lists each strength with its best fit, σ and intervals, the held one marked, and their correlation', () => {
    const r = twoPoiResult();
    r.poi!.list.push({ name: 'mu_third', label: 'Third strength', value: 1, fixed: true, error: null, interval68: null, interval95: null, scan: null, impacts: null });
    render(<PoiPanel result={r} />);
    const table = screen.getByRole('table', { name: 'Parameters of interest' });
    const rows = within(table).getAllByRole('row').slice(1);
    expect(rows.map((row) => row.querySelector('th')?.textContent)).toEqual(['signal strength mu', 'Associated strength mu_assoc', 'Third strength mu_thirdheld']);
    const cells = (i: number) => [...rows[i].querySelectorAll('td')].map((c) => c.textContent);
    expect(cells(1)).toEqual(['0.80', '0.50', '[0.31, 1.32] (+0.52 / −0.49)', '[−0.20, bound]']);
    expect(cells(2)).toEqual(['1.000', '–', 'held', 'held']);
    // each column says what it means on hover
    const headers = within(table).getAllByRole('columnheader');
    expect(headers.find((h) => h.textContent === '68 % interval')!.getAttribute('title')).toMatch(/q = 1/);
    expect(headers.find((h) => h.textContent === '95 % interval')!.getAttribute('title')).toMatch(/q = 3\.84/);
    const matrix = screen.getByRole('table', { name: 'Correlation among the parameters of interest' });
    expect(within(matrix).getAllByText('−0.42')).toHaveLength(2);
    expect(screen.getByText(/A higher value of one goes with a lower value of the other/)).toBeTruthy();
  });

  it('draws each strength’s scan and the contour with its two levels', () => {
    const { container } = render(<PoiPanel result={twoPoiResult()} />);
    expect(screen.getByText('Likelihood scan of μ_assoc')).toBeTruthy();
    expect(screen.getByText('Contour of signal strength and Associated strength')).toBeTruthy();
    const lines = [...container.querySelectorAll('path[data-contour-line]')];
    expect(lines.map((l) => l.getAttribute('data-contour-line'))).toEqual(['0.95', '0.6827']);
    // solid for 68.27 %, dashed for 95 %: they part without colour
    expect(lines[1].getAttribute('stroke-dasharray')).toBeNull();
    expect(lines[0].getAttribute('stroke-dasharray')).toBeTruthy();
    expect(container.querySelector('[data-best-fit]')).toBeTruthy();
    expect(container.textContent).toContain('68.27 % CL');
    expect(container.textContent).toContain('q = 5.99');
    expect(screen.getByRole('note').textContent).toBe('2 grid points did not converge and are left out.');
  });

  it('shows why a contour could not be made instead of a chart', () => {
    const c = twoPoiResult().contour!;
    const { container } = render(
      <ContourChart
        contour={{ ...c, failure: 'the fit did not converge', levels: [] }}
        axes={[
          { name: 'mu', label: 'signal strength', symbol: 'μ' },
          { name: 'mu_assoc', label: 'Associated strength', symbol: 'μ_assoc' },
        ]}
      />,
    );
    expect(screen.getByRole('note').textContent).toBe('No contour: the fit did not converge');
    expect(container.querySelector('svg')).toBeNull();
  });

  it('writes confidence levels with the decimals they need and styles them apart', () => {
    expect(clWords(0.6827)).toBe('68.27 %');
    expect(clWords(0.95)).toBe('95 %');
    expect(contourLevelStyle(0.6827).dash).toBeUndefined();
    expect(contourLevelStyle(0.95).dash).toBeDefined();
  });

  it('is on the summary only when the result has parameters of interest', () => {
    render(<SummaryView result={twoPoiResult()} />);
    expect(screen.getByRole('heading', { name: 'Parameters of interest' })).toBeTruthy();
    cleanup();
    render(<SummaryView result={convergedResult()} />);
    expect(screen.queryByRole('heading', { name: 'Parameters of interest' })).toBeNull();
    expect(screen.getByText('Likelihood scan of μ')).toBeTruthy();
  });
});

describe('the impact ranking on a chosen parameter of interest', () => {
  const names = () =>
    within(screen.getByRole('table', { name: 'Impact ranking' }))
      .getAllByRole('row')
      .slice(1)
      .map((r) => within(r).getAllByRole('link')[0]?.textContent);

  function renderRanking(result: FitResult, poi: string, onPoiChange = vi.fn()) {
    const router = createMemoryRouter([{ path: '/', element: <ImpactRanking slug="demo" fitId={7} result={result} poi={poi} onPoiChange={onPoiChange} /> }]);
    render(<RouterProvider router={router} />);
    return onPoiChange;
  }

  it('ranks by the chosen parameter’s impacts and writes its symbols', async () => {
    const user = userEvent.setup();
    renderRanking(twoPoiResult(), 'mu_assoc');
    await user.click(screen.getByRole('radio', { name: 'all' }));
    expect(names()).toEqual(['lumi', 'theory_scale', 'jes']);
    expect(screen.getByRole('columnheader', { name: /Share of σ\(μ_assoc\)²/ })).toBeTruthy();
    expect(screen.getByTitle(/^σ\(μ_assoc\) = √V\(μ_assoc, μ_assoc\)/).textContent).toContain('±0.5000');
    cleanup();
    renderRanking(twoPoiResult(), 'mu');
    await user.click(screen.getByRole('radio', { name: 'all' }));
    expect(names()).toEqual(['theory_scale', 'jes', 'lumi']);
    expect(screen.getByRole('columnheader', { name: /Share of σ_μ²/ })).toBeTruthy();
  });

  it('offers the choice only with several parameters of interest', async () => {
    const user = userEvent.setup();
    const change = renderRanking(twoPoiResult(), 'mu');
    const select = screen.getByLabelText('Impacts on') as HTMLSelectElement;
    expect([...select.options].map((o) => o.textContent)).toEqual(['signal strength (μ)', 'Associated strength (μ_assoc)']);
    await user.selectOptions(select, 'mu_assoc');
    expect(change).toHaveBeenCalledWith('mu_assoc');
    cleanup();
    renderRanking(convergedResult(), 'mu');
    expect(screen.queryByLabelText('Impacts on')).toBeNull();
  });

  it('keeps the choice in the address, so a link opens the same view', async () => {
    stubServer((_m, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('analyst', 'unblinded'));
      if (url.startsWith('/api/analyses/demo/questions')) return json(200, []);
      return undefined;
    });
    const fit = { ...fitDetail(), result: twoPoiResult() };
    function Address() {
      const [params] = useSearchParams();
      return <output aria-label="address">{params.toString()}</output>;
    }
    const user = userEvent.setup();
    renderWithApp(
      <>
        <ImpactsWithQuestions slug="demo" fit={fit} result={fit.result} />
        <Address />
      </>,
      '/a/demo/fits/7/impacts?poi=mu_assoc',
      '/a/demo/fits/7/impacts',
    );
    const select = (await screen.findByLabelText('Impacts on')) as HTMLSelectElement;
    expect(select.value).toBe('mu_assoc');
    expect(screen.getByText(/every Δ below is the change in μ_assoc/)).toBeTruthy();
    await user.selectOptions(select, 'mu');
    expect(screen.getByLabelText('address').textContent).toBe('');
    await user.selectOptions(select, 'mu_assoc');
    expect(screen.getByLabelText('address').textContent).toBe('poi=mu_assoc');
  });
});

describe('the contour choice when starting a fit', () => {
  const version: ModelVersion = {
    number: 2,
    note: 'both modes',
    forApproval: false,
    sha256: 'c'.repeat(64),
    createdAt: '2026-03-01T09:00:00Z',
    createdBy: 'Otto Brannholm',
    counts: { regions: 3, processes: 4, systematics: 8 },
    register: null,
    override: null,
  };
  const choices = { parameters: ['mu'], systematics: [], groups: [], regions: [], pois: [{ key: 'mu_assoc', label: 'Associated strength' }] };

  it('sends the chosen pair as options.contour', async () => {
    const calls = stubServer((method, url) => (method === 'POST' && url === '/api/analyses/demo/fits' ? json(201, { id: 9 }) : undefined));
    const user = userEvent.setup();
    renderWithApp(<StartFitForm slug="demo" versions={[version]} blinded={false} overConstraintThreshold={0.5} choices={choices} />);
    const group = screen.getByRole('group', { name: 'Contour of two parameters of interest' });
    await user.selectOptions(within(group).getByLabelText('First (across)'), 'mu');
    await user.selectOptions(within(group).getByLabelText('Second (up)'), 'mu_assoc');
    await user.click(screen.getByRole('button', { name: 'Run the fit' }));
    await vi.waitFor(() => expect(calls.some((c) => c.method === 'POST')).toBe(true));
    const body = calls.find((c) => c.method === 'POST')!.body as { options: { contour?: unknown } };
    expect(body.options.contour).toEqual(['mu', 'mu_assoc']);
  });

  it('sends no contour when none is chosen, and offers none without declared parameters', async () => {
    const calls = stubServer((method, url) => (method === 'POST' && url === '/api/analyses/demo/fits' ? json(201, { id: 9 }) : undefined));
    const user = userEvent.setup();
    renderWithApp(<StartFitForm slug="demo" versions={[version]} blinded={false} overConstraintThreshold={0.5} choices={choices} />);
    await user.click(screen.getByRole('button', { name: 'Run the fit' }));
    await vi.waitFor(() => expect(calls.some((c) => c.method === 'POST')).toBe(true));
    expect((calls.find((c) => c.method === 'POST')!.body as { options: object }).options).not.toHaveProperty('contour');
    cleanup();
    renderWithApp(<StartFitForm slug="demo" versions={[version]} blinded={false} overConstraintThreshold={0.5} choices={{ ...choices, pois: [] }} />);
    expect(screen.queryByRole('group', { name: 'Contour of two parameters of interest' })).toBeNull();
  });

  it('is disabled with the reason for a control-only fit', async () => {
    stubServer(() => undefined);
    const user = userEvent.setup();
    renderWithApp(<StartFitForm slug="demo" versions={[version]} blinded={false} overConstraintThreshold={0.5} choices={choices} />);
    await user.click(screen.getByRole('radio', { name: 'Observed data, control regions only' }));
    const group = screen.getByRole('group', { name: 'Contour of two parameters of interest' }) as HTMLFieldSetElement;
    expect(group.disabled).toBe(true);
    expect(group.textContent).toContain('Not for a fit of the control regions alone');
  });
});

describe('the fit screen with several parameters of interest', () => {
  function serve(result: FitResult, extra: Partial<ReturnType<typeof fitDetail>> = {}) {
    const { correlation: _c, information: _i, yields: _y, gammas, ...head } = result;
    stubServer((_m, url) => {
      if (url === '/api/analyses/demo') return json(200, overview('analyst', 'unblinded'));
      if (url === '/api/analyses/demo/fits/7') return json(200, { ...fitDetail(), ...extra, result: { ...head, gammas: { count: gammas.count, maxAbsPull: gammas.maxAbsPull } } });
      return undefined;
    });
  }

  it('shows the panel on the summary of a converged fit', async () => {
    serve(twoPoiResult());
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', '/a/:slug/fits/:fitId/:tab?');
    expect(await screen.findByRole('table', { name: 'Parameters of interest' })).toBeTruthy();
    expect(screen.getByRole('img', { name: /^Contour of signal strength and Associated strength/ })).toBeTruthy();
  });

  it('shows nothing of them for a fit with μ hidden', async () => {
    const options = fitOptionsSchema.parse({ dataset: 'observed', hiddenMu: true, impacts: 'none' });
    serve(twoPoiResult({ options, summary: null, groupedImpacts: [], scan: null }), { options, headline: null });
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', '/a/:slug/fits/:fitId/:tab?');
    expect(await screen.findByText('Signal strength: hidden')).toBeTruthy();
    expect(screen.queryByRole('heading', { name: 'Parameters of interest' })).toBeNull();
    expect(screen.queryByText(/Associated strength|μ_assoc/)).toBeNull();
  });

  it('shows no number of a fit that failed', async () => {
    const r = twoPoiResult();
    serve({ ...r, status: 'failed', convergence: { ...r.convergence, failure: 'the minimiser stopped' } }, { state: 'failed', failure: 'the minimiser stopped', headline: null });
    renderWithApp(<FitResultRoute />, '/a/demo/fits/7', '/a/:slug/fits/:fitId/:tab?');
    expect(await screen.findByText('The fit failed: no result')).toBeTruthy();
    expect(screen.queryByRole('heading', { name: 'Parameters of interest' })).toBeNull();
    expect(screen.queryByText(/Associated strength/)).toBeNull();
  });
});
