import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { checkAccessibility, screenshot, serverAndBrowser, signIn } from './support';

/** The demo's hypothesis m1250 as its files (docs/examples, npm run examples). */
const CSV = 'docs/examples/hypothesis-m1250.csv';
const EFFECTS = 'docs/examples/hypothesis-m1250-effects.json';

describe('the signal hypotheses of the model screen', () => {
  const live = serverAndBrowser();
  const panelOf = (page: Page) => page.locator('section', { has: page.getByRole('heading', { name: /^Signal hypotheses/ }) });
  const table = (page: Page) => page.getByRole('table', { name: 'Signal hypotheses' });

  it('lets an analyst delete a hypothesis after confirming, and add it back from its CSV and effects, refused first without its shape effects', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'otto@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/model`);
    const panel = panelOf(page);
    await panel.getByRole('heading', { name: 'Signal hypotheses (30)' }).waitFor();
    await expect.poll(() => table(page).getByRole('row').count()).toBe(31);
    // by mass: the first row below the header is the lowest
    expect(await table(page).getByRole('row').nth(1).getByRole('rowheader').textContent()).toMatch(/m1010/);

    await panel.getByRole('button', { name: 'Delete hypothesis m1250' }).click();
    await panel.getByText('Delete hypothesis m1250?').waitFor();
    await panel.getByRole('button', { name: 'Delete hypothesis', exact: true }).click();
    await panel.getByRole('heading', { name: 'Signal hypotheses (29)' }).waitFor();
    expect(await table(page).getByRole('rowheader', { name: /m1250/ }).count()).toBe(0);

    await panel.getByRole('button', { name: 'Add hypothesis' }).click();
    const form = page.getByRole('form', { name: 'Add a signal hypothesis' });
    await form.getByLabel('Key').fill('m1250');
    await form.getByLabel('Label').fill('m = 1250 GeV');
    await form.getByLabel('Mass (GeV)').fill('1250');
    await form.getByLabel('Templates (CSV)').setInputFiles(CSV);
    await form.getByRole('button', { name: 'Preview' }).click();
    // the model varies the vireon's shape in both signal regions: the effects are required
    await form.getByRole('alert').getByText(/systematic "flare_escale" varies by shape: give that shape effect for this hypothesis too/).first().waitFor();
    await screenshot(page, 'signal-hypotheses-refused');

    await form.getByLabel('Effects (JSON, optional)').setInputFiles(EFFECTS);
    await form.getByRole('button', { name: 'Preview' }).click();
    const preview = form.getByRole('region', { name: 'Preview of the signal hypothesis' });
    await preview.getByText('Preview: adds m = 1250 GeV (mass = 1250 GeV)').waitFor();
    expect(await preview.getByRole('row').count()).toBe(3);
    await screenshot(page, 'signal-hypotheses-preview');
    await checkAccessibility(page, 'signal hypotheses, adding one');

    await form.getByRole('button', { name: 'Save hypothesis' }).click();
    await panel.getByRole('heading', { name: 'Signal hypotheses (30)' }).waitFor();
    const row = table(page).getByRole('row', { name: /m1250/ });
    await row.waitFor();
    expect((await row.getByRole('cell').allTextContents()).slice(0, 4)).toEqual(['1250 GeV', 'vireon in SR-core, SR-wide', '58.4 events', '12 shape']);
    await screenshot(page, 'signal-hypotheses-analyst');

    const listed = await page.evaluate(async () => (await fetch('/api/analyses/vireon-search/signal-hypotheses')).json());
    expect(listed.points.map((p: { key: string }) => p.key)).toContain('m1250');
    expect(listed.issues).toEqual([]);
  });

  it('shows a reader the hypotheses without controls', async () => {
    const { page, context } = live.browser;
    await context.clearCookies();
    await signIn(page, live.server.url, 'rafe@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/model`);
    const panel = panelOf(page);
    await table(page).getByRole('rowheader', { name: /m1310/ }).waitFor();
    await panel.getByText('Parameter:').waitFor();
    expect(await panel.getByRole('button').filter({ hasText: /Add hypothesis|Delete|Edit/ }).count()).toBe(0);
    await checkAccessibility(page, 'signal hypotheses, as a reader');
  });
});
