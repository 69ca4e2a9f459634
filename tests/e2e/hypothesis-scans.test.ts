import { describe, expect, it } from 'vitest';
import { api, checkAccessibility, screenshot, serverAndBrowser, signIn, type Browser } from './support';

/**
 * Scans over signal hypotheses in the browser: the pilot run's observed scan that the demo's story
 * starts (its global significance, both charts and every hypothesis), and the blinded search's
 * expected scan, whose form offers no observed scan.
 */

const P = 'vireon-pilot';
const V = 'vireon-search';

async function as(live: { browser: Browser; server: { url: string } }, email: string) {
  await live.browser.context.clearCookies();
  await signIn(live.browser.page, live.server.url, email);
  await live.browser.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

type Scan = { id: number; label: string; state: string; result: { points: { value: number; local: { z: number } | null }[]; global: { at: { value: number; z: number }; upcrossingEstimate: { z: number }; fromToys: { count: number; exceeding: number } | null } | null } | null };

async function scans(live: { browser: Browser }, slug: string): Promise<Scan[]> {
  for (let i = 0; i < 1200; i++) {
    const list = (await api(live.browser, 'GET', `/api/analyses/${slug}/hypothesis-scans`)).body as Scan[];
    if (list.length > 0 && list.every((s) => s.state !== 'running' && s.state !== 'queued')) return list;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`the scans of ${slug} did not end`);
}

describe('scans over signal hypotheses in the browser', () => {
  const live = serverAndBrowser();

  it('shows the pilot run’s largest excess with its global significance, the charts and every hypothesis', async () => {
    await as(live, 'rafe@lantern.example');
    const { page } = live.browser;
    const [scan] = await scans(live, P);
    expect(scan.state).toBe('succeeded');
    const g = scan.result!.global!;
    expect(g.at.value).toBe(1390);
    expect(g.fromToys!.count).toBe(300);

    await page.goto(`${live.server.url}/a/${P}`);
    await page.getByRole('navigation', { name: 'Analysis' }).getByRole('link', { name: 'Hypotheses' }).click();
    await page.getByRole('table', { name: 'Scans over signal hypotheses' }).getByRole('link', { name: scan.label }).click();
    await page.waitForURL(new RegExp(`/a/${P}/hypotheses/${scan.id}$`));
    // the numbers on the page are the stored ones
    await page.getByText(`Z = ${g.at.z.toFixed(2)}σ`, { exact: false }).first().waitFor();
    await page.getByText(`Z = ${g.upcrossingEstimate.z.toFixed(2)}σ`, { exact: false }).first().waitFor();
    await page.getByText(`${g.fromToys!.exceeding} of 300 background-only pseudo-experiments`, { exact: false }).waitFor();
    await page.getByRole('img', { name: /Local p0 against mass over 25 hypotheses/ }).waitFor();
    await page.getByRole('img', { name: /Upper limit on μ/ }).waitFor();
    const rows = page.getByRole('table', { name: 'Hypotheses of this scan' }).locator('tbody tr');
    expect(await rows.count()).toBe(25);
    expect(await page.getByRole('table', { name: 'Hypotheses of this scan' }).getByText('Converged', { exact: true }).count()).toBe(25);
    await page.getByText('Results inform the collaboration’s statistical review and approval; they do not replace it.', { exact: false }).waitFor();
    // a reader sees no form to start a scan
    await page.goto(`${live.server.url}/a/${P}/hypotheses`);
    await page.getByRole('table', { name: 'Scans over signal hypotheses' }).waitFor();
    expect(await page.getByRole('form', { name: 'Scan the signal hypotheses' }).count()).toBe(0);
    await screenshot(page, 'hypothesis-scans');
    await checkAccessibility(page, 'hypothesis scans');
  });

  it('offers the blinded search only its expected scan, and starts one from the form', async () => {
    await as(live, 'otto@lantern.example');
    const { page } = live.browser;
    const before = await scans(live, V);
    expect(before[0].result!.global).toBeNull();
    expect(before[0].result!.points.every((p) => p.local === null)).toBe(true);
    await page.goto(`${live.server.url}/a/${V}/hypotheses`);
    const form = page.getByRole('form', { name: 'Scan the signal hypotheses' });
    await form.waitFor();
    expect(await form.getByRole('option', { name: /Observed data/ }).isDisabled()).toBe(true);
    await form.getByLabel('Label (optional)').fill('expected, from the browser');
    await form.getByRole('button', { name: 'Run the scan' }).click();
    await page.waitForURL(new RegExp(`/a/${V}/hypotheses/\\d+$`));
    const after = await scans(live, V);
    const started = after.find((s) => s.label === 'expected, from the browser')!;
    expect(started.state).toBe('succeeded');
    await page.getByRole('img', { name: /Expected local p0 against mass over 30 hypotheses/ }).waitFor();
    await screenshot(page, 'hypothesis-scan-expected');
  });
});
