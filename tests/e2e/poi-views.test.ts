import { describe, expect, it } from 'vitest';
import type { FitResult } from '@shared/schemas/fit';
import { decimalsFor, formatFixed } from '../../src/lib/stats-format';
import { api, checkAccessibility, screenshot, serverAndBrowser, signIn, type Browser } from './support';

/**
 * The fit screens of the demo's two-mode measurement: the observed fit its story runs with both
 * strengths, their scans and the contour of μ and mu_assoc. The summary's table and contour, and
 * the impact ranking on either strength, with the choice kept in the address.
 */

const M = 'cascade-modes';

type Fit = { id: number; state: string; label: string; result: FitResult | null };

async function storyFit(browser: Browser): Promise<Fit> {
  for (let i = 0; i < 1200; i++) {
    const list = (await api(browser, 'GET', `/api/analyses/${M}/fits`)).body as Fit[];
    const done = list.find((f) => f.state === 'succeeded' || f.state === 'failed');
    if (done) return (await api(browser, 'GET', `/api/analyses/${M}/fits/${done.id}`)).body as Fit;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`the fit of ${M} did not end`);
}

/** The names of the free nuisance parameters in the order the ranking puts them for these impacts. */
function expectedOrder(rows: { name: string; postfitImpact: { up: number | null; down: number | null } | null }[]) {
  const size = (r: (typeof rows)[number]) => (r.postfitImpact ? Math.max(Math.abs(r.postfitImpact.up ?? 0), Math.abs(r.postfitImpact.down ?? 0)) : -1);
  return [...rows].sort((a, b) => size(b) - size(a) || a.name.localeCompare(b.name)).map((r) => r.name);
}

describe('two parameters of interest on the fit screens', () => {
  const live = serverAndBrowser();

  it('shows both strengths with their intervals and correlation, and the contour with its two lines', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'rafe@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    const fit = await storyFit(live.browser);
    expect(fit.state).toBe('succeeded');
    const result = fit.result!;
    const [mu, assoc] = result.poi!.list;
    expect(assoc.name).toBe('mu_assoc');
    expect(result.contour!.failure).toBeNull();

    for (const width of [1280, 1440]) {
      await page.setViewportSize({ width, height: 900 });
      await page.goto(`${live.server.url}/a/${M}/fits/${fit.id}`);
      const panel = page.locator('section', { has: page.getByRole('heading', { name: 'Parameters of interest' }) });
      const table = panel.getByRole('table', { name: 'Parameters of interest', exact: true });
      await table.waitFor();
      const rows = table.locator('tbody tr');
      expect(await rows.count()).toBe(2);
      expect(await rows.nth(0).getByRole('rowheader').textContent()).toBe('signal strength mu');
      expect(await rows.nth(1).getByRole('rowheader').textContent()).toBe('Associated-production strength mu_assoc');
      // the numbers on the page are the stored ones
      for (const [i, p] of [mu, assoc].entries()) {
        const cells = await rows.nth(i).getByRole('cell').allTextContents();
        expect(cells[0]).toBe(formatFixed(p.value, decimalsFor(p.error)));
        expect(cells[1]).toBe(formatFixed(p.error, decimalsFor(p.error)));
        expect(cells[2]).toContain(`[${formatFixed(p.interval68!.low, decimalsFor(p.error))}, ${formatFixed(p.interval68!.high, decimalsFor(p.error))}]`);
      }
      const rho = result.poi!.correlation.values[1];
      await panel.getByText(`ρ = ${rho < 0 ? '−' : '+'}${Math.abs(rho).toFixed(2)}`).waitFor();

      const contour = panel.getByRole('img', { name: /^Contour of signal strength and Associated-production strength/ });
      await contour.waitFor();
      const inner = contour.locator('path[data-contour-line="0.6827"]');
      const outer = contour.locator('path[data-contour-line="0.95"]');
      expect(await inner.count()).toBeGreaterThan(0);
      expect(await outer.count()).toBeGreaterThan(0);
      // solid and dashed: the two levels part without colour
      expect(await inner.first().getAttribute('stroke-dasharray')).toBeNull();
      expect(await outer.first().getAttribute('stroke-dasharray')).toBeTruthy();
      expect(await contour.locator('[data-best-fit]').count()).toBe(1);
      expect(await contour.textContent()).toContain('68.27 % CL');
      expect(await contour.textContent()).toContain('q = 5.99');
      await panel.getByRole('img', { name: /^Likelihood scan of μ_assoc/ }).waitFor();
      await panel.scrollIntoViewIfNeeded();
      await screenshot(page, `fit-parameters-of-interest-${width}`);
    }
    await checkAccessibility(page, 'fit summary, parameters of interest');
  });

  it('ranks the impacts on the chosen strength, and a link with ?poi opens the same view', async () => {
    const { page } = live.browser;
    const fit = await storyFit(live.browser);
    const result = fit.result!;
    const assoc = result.poi!.list[1];
    const free = new Set(result.nuisance.filter((n) => !n.fixed).map((n) => n.name));
    const onMu = expectedOrder(result.nuisance.filter((n) => free.has(n.name)));
    const onAssoc = expectedOrder(assoc.impacts!.filter((n) => free.has(n.name)));

    await page.setViewportSize({ width: 1440, height: 900 });
    await page.goto(`${live.server.url}/a/${M}/fits/${fit.id}/impacts`);
    const select = page.getByLabel('Impacts on');
    await select.waitFor();
    expect(await select.inputValue()).toBe('mu');
    const ranking = page.getByRole('table', { name: 'Impact ranking' });
    await page.getByRole('radio', { name: 'all' }).check({ force: true });
    const names = () => ranking.locator('tbody tr a').allTextContents();
    await expect.poll(names).toEqual(onMu);

    await select.selectOption('mu_assoc');
    await page.waitForURL((u) => u.searchParams.get('poi') === 'mu_assoc');
    await page.getByRole('radio', { name: 'all' }).check({ force: true });
    await expect.poll(names).toEqual(onAssoc);
    await page.getByRole('columnheader', { name: /Share of σ\(μ_assoc\)²/ }).waitFor();

    // the address alone opens the same view
    await page.goto(`${live.server.url}/a/${M}/fits/${fit.id}/impacts?poi=mu_assoc`);
    await select.waitFor();
    expect(await select.inputValue()).toBe('mu_assoc');
    await page.getByText(`μ̂_assoc = ${formatFixed(assoc.value, 3)}`, { exact: false }).waitFor();
    await screenshot(page, 'fit-impacts-on-mu_assoc-1440');
    await checkAccessibility(page, 'impact ranking on mu_assoc');
  });
});
