import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { checkAccessibility, screenshot, serverAndBrowser, signIn } from './support';

/** The model screen of the demo's two-mode measurement: μ and mu_assoc, each with what it multiplies. */
describe('the parameters of interest on the model screen', () => {
  const live = serverAndBrowser();
  const panelOf = (page: Page) => page.locator('section', { has: page.getByRole('heading', { name: /^Parameters of interest/ }) });

  it('lists μ first with the signal templates no other claims, then mu_assoc with its range, start and templates, at 1280 and 1440 px', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'rafe@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    for (const width of [1280, 1440]) {
      await page.setViewportSize({ width, height: 900 });
      await page.goto(`${live.server.url}/a/cascade-modes/model`);
      const panel = panelOf(page);
      await panel.getByRole('heading', { name: 'Parameters of interest (2)' }).waitFor();
      const table = panel.getByRole('table', { name: 'Parameters of interest' });
      const rows = table.getByRole('row');
      await expect.poll(() => rows.count()).toBe(3);
      expect(await rows.nth(1).getByRole('rowheader').textContent()).toBe('Signal strength μmu');
      expect(await rows.nth(1).getByRole('cell').allTextContents()).toEqual(['—', '—', 'SR-direct × cascade_direct, SR-assoc × cascade_direct']);
      expect(await rows.nth(2).getByRole('rowheader').textContent()).toBe('Associated-production strengthmu_assoc');
      expect(await rows.nth(2).getByRole('cell').allTextContents()).toEqual(['[-5, 10]', '1', 'SR-direct × cascade_assoc, SR-assoc × cascade_assoc']);
      await panel.getByText(/set by importing a model file/).waitFor();
      // the table fits its panel: no column is pushed out of view
      const overflow = await table.evaluate((t) => t.scrollWidth - (t.parentElement?.clientWidth ?? t.scrollWidth));
      expect(overflow).toBeLessThanOrEqual(0);
      await panel.scrollIntoViewIfNeeded();
      await screenshot(page, `model-parameters-of-interest-${width}`);
    }
    await checkAccessibility(page, 'model, parameters of interest');
  });

  it('shows no such panel on a model whose only parameter of interest is μ', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/cascade-rate/model`);
    await page.getByRole('heading', { name: /^Processes/ }).waitFor();
    expect(await page.getByRole('heading', { name: /^Parameters of interest/ }).count()).toBe(0);
  });
});
