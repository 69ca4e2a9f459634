import type { Locator, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { api, checkAccessibility, keyboardReach, screenshot, serverAndBrowser, signIn, type Browser } from './support';

/**
 * Every main screen passes axe-core without a serious or critical violation, and the keyboard
 * alone reaches and works every control: sign-in, the register, an entry, and the fit review
 * (summary, impact ranking, correlations, a parameter's diagnosis and the other result views).
 * Signed in as Otto (analyst) on the unblinded "cascade-rate", and as Mira (convener).
 */

const SLUG = 'cascade-rate';

async function as(live: { browser: Browser; server: { url: string } }, email: string) {
  await live.browser.context.clearCookies();
  await signIn(live.browser.page, live.server.url, email);
  await live.browser.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

/** Presses Tab (or Shift+Tab) until the element is focused; fails when it is not in the tab order. */
async function tabTo(page: Page, target: Locator, max = 300, key: 'Tab' | 'Shift+Tab' = 'Tab') {
  for (let i = 0; i < max; i++) {
    await page.keyboard.press(key);
    if (await target.evaluate((el) => el === document.activeElement).catch(() => false)) return;
  }
  throw new Error(`Tab never reached ${target}`);
}

/** Reached by Tab: every visible control, no positive tabindex, no click handler the keyboard cannot use. */
async function expectKeyboardReachesEverything(page: Page, screenName: string) {
  const report = await keyboardReach(page);
  expect({ screen: screenName, unreachable: report.unreachable, positiveTabindex: report.positiveTabindex, clickableWithoutKeyboard: report.clickableWithoutKeyboard }).toEqual({
    screen: screenName,
    unreachable: [],
    positiveTabindex: [],
    clickableWithoutKeyboard: [],
  });
  expect(report.order.length).toBeGreaterThan(5);
}

describe('accessibility: axe-core on every main screen, and every action by keyboard', () => {
  const live = serverAndBrowser();
  let fitBase = '';

  it('the sign-in page passes axe, also while it shows an error, and signs in with the keyboard alone', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/sign-in`);
    await page.getByRole('button', { name: /sign in/i }).waitFor();
    await checkAccessibility(page, 'sign-in');
    await screenshot(page, 'a11y-sign-in');

    // a wrong password: the message, then the page again
    await signIn(page, live.server.url, 'otto@lantern.example', 'wrong-password');
    await page.getByText(/e-mail and password do not match/i).waitFor();
    await checkAccessibility(page, 'sign-in with an error');

    // keyboard only: Tab to the fields, type, Enter submits
    await page.goto(`${live.server.url}/sign-in`);
    await page.getByRole('button', { name: /sign in/i }).waitFor();
    await tabTo(page, page.getByLabel(/e-mail/i));
    await page.keyboard.type('otto@lantern.example');
    await page.keyboard.press('Tab');
    expect(await page.getByLabel(/password/i).evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.type('lantern-demo-2026');
    await page.keyboard.press('Enter');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));

    // and opens the analysis from the list with Enter
    const analysis = page.getByRole('link', { name: /Cascade production rate/ }).first();
    await analysis.waitFor();
    await tabTo(page, analysis);
    await page.keyboard.press('Enter');
    await page.waitForURL(new RegExp(`/a/${SLUG}$`));
  });

  it('the register passes axe, Tab reaches every control, and the keyboard filters, sorts, hides a column and opens an entry', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/vireon-search/register`);
    await page.getByRole('cell', { name: 'flare_escale' }).waitFor();
    await checkAccessibility(page, 'register');
    await screenshot(page, 'a11y-register');
    await expectKeyboardReachesEverything(page, 'register');

    await page.reload();
    await page.getByRole('cell', { name: 'flare_escale' }).waitFor();
    const table = page.getByRole('table').first();
    // filter
    await tabTo(page, page.getByRole('searchbox', { name: /filter/i }));
    await page.keyboard.type('calo');
    await page.waitForFunction(() => document.querySelectorAll('tbody tr').length < 40);
    expect(await table.locator('tbody tr').count()).toBeGreaterThan(0);
    // sort by label with Enter on its header button
    const labelHeader = table.getByRole('columnheader', { name: /label/i });
    const before = await labelHeader.getAttribute('aria-sort');
    await tabTo(page, labelHeader.getByRole('button'));
    await page.keyboard.press('Enter');
    await expect.poll(() => labelHeader.getAttribute('aria-sort')).not.toBe(before);
    // open the column chooser with Space, then hide the owner column with Space
    await tabTo(page, page.locator('summary', { hasText: 'Columns' }), 20, 'Shift+Tab');
    await page.keyboard.press('Space');
    const owner = page.getByRole('checkbox', { name: 'Show column Owner' });
    await owner.waitFor();
    await checkAccessibility(page, 'register with the column chooser open');
    await tabTo(page, owner, 20);
    await page.keyboard.press('Space');
    await expect.poll(() => table.getByRole('columnheader', { name: /owner/i }).count()).toBe(0);
    // open an entry with Enter
    const link = table.getByRole('link', { name: 'calo_nonlin', exact: true });
    // exact: the row's pruning mark is a link whose name holds the key too
    await tabTo(page, link, 60);
    await page.keyboard.press('Enter');
    await page.waitForURL(/\/entries\/calo_nonlin$/);
    await page.getByRole('heading', { name: /Calorimeter non-linearity/ }).first().waitFor();
  });

  it('an entry passes axe for its owner and for a convener reviewing it, and Tab reaches every control', async () => {
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/${SLUG}/entries/halo_norm`);
    await page.getByRole('heading', { name: /Beam-halo normalisation/ }).first().waitFor();
    await page.waitForTimeout(500);
    await checkAccessibility(page, 'entry (owner)');
    await screenshot(page, 'a11y-entry');
    await expectKeyboardReachesEverything(page, 'entry (owner)');

    await as(live, 'mira@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search/entries/flare_iso`);
    await page.getByRole('button', { name: 'Accept', exact: true }).waitFor();
    await page.waitForTimeout(500);
    await checkAccessibility(page, 'entry (convener reviewing)');
    await expectKeyboardReachesEverything(page, 'entry (convener reviewing)');
  });

  it('has a finished fit with full impacts to review', async () => {
    await as(live, 'otto@lantern.example');
    const version = await api(live.browser, 'POST', `/api/analyses/${SLUG}/versions`, { note: 'Accessibility review' });
    expect(version.status).toBe(201);
    const started = await api(live.browser, 'POST', `/api/analyses/${SLUG}/fits`, { version: version.body.number, label: 'observed, full impacts', options: { dataset: 'observed', impacts: 'full' } });
    expect(started.status).toBe(202);
    let state = 'queued';
    for (let i = 0; i < 600 && ['queued', 'running'].includes(state); i++) {
      await new Promise((r) => setTimeout(r, 250));
      state = (await api(live.browser, 'GET', `/api/analyses/${SLUG}/fits/${started.body.id}`)).body.state;
    }
    expect(state).toBe('succeeded');
    fitBase = `${live.server.url}/a/${SLUG}/fits/${started.body.id}`;
  });

  it('every view of the fit result passes axe and Tab reaches every control in it', async () => {
    const { page } = live.browser;
    const ready: Record<string, () => Promise<unknown>> = {
      summary: () => page.getByText(/converged/i).first().waitFor(),
      impacts: () => page.getByRole('table', { name: 'Impact ranking' }).waitFor(),
      correlations: () => page.getByRole('table', { name: 'Strongest correlations' }).waitFor(),
      toys: () => page.getByRole('form', { name: 'Run pseudo-experiments' }).waitFor(),
    };
    for (const tab of ['summary', 'impacts', 'correlations', 'pulls', 'groups', 'distributions', 'diagnostics', 'toys', 'compare']) {
      await page.goto(`${fitBase}/${tab}`);
      await page.getByRole('navigation', { name: 'Fit result views' }).waitFor();
      await (ready[tab]?.() ?? page.waitForTimeout(800));
      await page.waitForTimeout(300);
      await checkAccessibility(page, `fit ${tab}`);
      await screenshot(page, `a11y-fit-${tab}`);
      await expectKeyboardReachesEverything(page, `fit ${tab}`);
    }
  });

  it('the diagnosis of one parameter passes axe and Tab reaches every control in it', async () => {
    const { page } = live.browser;
    await page.goto(`${fitBase}/diagnostics?parameter=halo_norm`);
    const panel = page.getByRole('article', { name: 'Diagnosis of halo_norm' });
    await panel.getByRole('list', { name: 'Summary' }).waitFor({ timeout: 120_000 });
    await page.waitForTimeout(500);
    await checkAccessibility(page, 'diagnosis of halo_norm');
    await screenshot(page, 'a11y-diagnosis');
    await expectKeyboardReachesEverything(page, 'diagnosis of halo_norm');
  });

  it('a convener raises a question from the impact ranking with the keyboard alone, and the form passes axe', async () => {
    await as(live, 'mira@lantern.example');
    const { page } = live.browser;
    await page.goto(`${fitBase}/impacts`);
    await page.getByRole('table', { name: 'Impact ranking' }).waitFor();
    await checkAccessibility(page, 'impact ranking (convener)');
    await expectKeyboardReachesEverything(page, 'impact ranking (convener)');
    // the cut is one tab stop; the arrow keys move it, and the table follows
    const rows = () => page.getByRole('table', { name: 'Impact ranking' }).locator('tbody tr').count();
    const at90 = await rows();
    await tabTo(page, page.getByRole('radio', { name: '90 %' }));
    await page.keyboard.press('ArrowRight');
    await page.keyboard.press('ArrowRight');
    await expect.poll(() => page.getByRole('radio', { name: 'all' }).isChecked()).toBe(true);
    await expect.poll(rows).toBeGreaterThanOrEqual(at90);
    await page.keyboard.press('ArrowLeft');
    await page.keyboard.press('ArrowLeft');
    await expect.poll(() => page.getByRole('radio', { name: '90 %' }).isChecked()).toBe(true);
    await expect.poll(rows).toBe(at90);
    await page.getByRole('status', { name: 'What the cut keeps' }).getByText(/parameters hold/).waitFor();
    const raise = page.getByRole('button', { name: 'Raise a question on halo_norm' });
    await tabTo(page, raise);
    await page.keyboard.press('Enter');
    const form = page.getByRole('form', { name: 'Raise a question on halo_norm' });
    await form.waitFor();
    await checkAccessibility(page, 'raise a question');
    // the form opens above the table, and the focus goes into it
    const focused = (l: Locator) => l.evaluate((el) => el === document.activeElement);
    await expect.poll(() => focused(form.getByLabel('Title'))).toBe(true);
    await page.keyboard.type('Why is halo_norm constrained?');
    await tabTo(page, form.getByLabel('Question'), 5);
    await page.keyboard.type('Which bins constrain it?');
    await tabTo(page, form.getByRole('button', { name: 'Raise the question' }), 10);
    await page.keyboard.press('Enter');
    await page.getByRole('link', { name: 'Open the thread' }).waitFor();
    // closing it gives the focus back to the row's button
    await tabTo(page, form.getByRole('button', { name: 'Close' }), 10);
    await page.keyboard.press('Enter');
    await form.waitFor({ state: 'detached' });
    await expect.poll(() => focused(raise)).toBe(true);
  });

  it('switches the fit result views, opens a diagnosis from the pulls chart, and reads the correlation matrix, by keyboard', async () => {
    const { page } = live.browser;
    await page.goto(fitBase);
    const tabs = page.getByRole('navigation', { name: 'Fit result views' });
    await tabs.waitFor();
    // switch views with Tab and Enter
    await tabTo(page, tabs.getByRole('link', { name: 'Pulls' }));
    await page.keyboard.press('Enter');
    await page.waitForURL(/\/pulls$/);
    await expect.poll(() => tabs.getByRole('link', { name: 'Pulls' }).getAttribute('aria-current')).toBe('page');

    // the chart: one tab stop, the arrow keys move between parameters, Enter opens the diagnosis
    const chart = page.getByRole('img', { name: /^Pulls and constraints/ });
    await tabTo(page, chart, 20);
    const status = page.getByText(/Enter opens its diagnosis/);
    const first = (await status.textContent())!.split(':')[0];
    await page.keyboard.press('ArrowDown');
    await expect.poll(async () => (await status.textContent())!.split(':')[0]).not.toBe(first);
    const second = (await status.textContent())!.split(':')[0];
    await screenshot(page, 'a11y-pulls-keyboard');
    await page.keyboard.press('Enter');
    await page.waitForURL(new RegExp(`/diagnostics\\?parameter=${second}$`));
    await page.getByRole('article', { name: `Diagnosis of ${second}` }).waitFor({ timeout: 120_000 });

    // from the summary to the correlations by keyboard, then read cells with the arrow keys
    await page.goto(`${fitBase}/summary`);
    await tabs.waitFor();
    await tabTo(page, tabs.getByRole('link', { name: 'Correlations' }));
    await page.keyboard.press('Enter');
    await page.waitForURL(/\/correlations$/);
    const matrix = page.getByRole('img', { name: /Post-fit correlation matrix/ });
    await tabTo(page, matrix, 40);
    await page.keyboard.press('ArrowRight');
    await page.getByText(/ × .*: ρ = /).first().waitFor();
  });

  it('the review set and the pruning screen pass axe for a convener and an analyst, and Tab reaches every control', async () => {
    const { page } = live.browser;
    await as(live, 'mira@lantern.example');
    const [set] = (await api(live.browser, 'GET', '/api/analyses/vireon-search/review-sets')).body as { id: number }[];
    await page.goto(`${live.server.url}/a/vireon-search/review-sets/${set.id}`);
    await page.getByText('Which parameters move between the fits').waitFor({ timeout: 60_000 });
    await page.waitForTimeout(300);
    await checkAccessibility(page, 'review set');
    await expectKeyboardReachesEverything(page, 'review set');
    await as(live, 'otto@lantern.example');
    await page.goto(`${live.server.url}/a/vireon-search/pruning`);
    await page.getByLabel('Summary').waitFor({ timeout: 60_000 });
    await page.waitForTimeout(300);
    await checkAccessibility(page, 'pruning');
    await screenshot(page, 'a11y-pruning');
    await expectKeyboardReachesEverything(page, 'pruning');
  });
});
