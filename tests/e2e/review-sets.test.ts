import { describe, expect, it } from 'vitest';
import { MOVES } from '@shared/schemas/review-sets';
import { api, checkAccessibility, screenshot, serverAndBrowser, signIn, type Browser } from './support';

/**
 * The review programme on the demo's blinded search (vireon-search): the review set its story
 * starts, read side by side with the moves filter; a variant fit (a held parameter, μ hidden)
 * started from the form; a refused variant whose message sits next to its field; and the checks
 * of a parameter run from its diagnosis on the unblinded measurement.
 */

const V = 'vireon-search';
const C = 'cascade-rate';

async function as(live: { browser: Browser; server: { url: string } }, email: string) {
  await live.browser.context.clearCookies();
  await signIn(live.browser.page, live.server.url, email);
  await live.browser.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

async function until<T>(what: string, read: () => Promise<T>, done: (t: T) => boolean): Promise<T> {
  for (let i = 0; i < 1200; i++) {
    const t = await read();
    if (done(t)) return t;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`${what} did not end`);
}

type Parameter = { name: string; pullSpread: number; constraintSpread: number };

describe('the review programme in the browser', () => {
  const live = serverAndBrowser();
  let setId = 0;

  it('opens the demo review set from the fits page and reads its members side by side', async () => {
    await as(live, 'mira@lantern.example');
    const { page } = live.browser;
    const sets = (await api(live.browser, 'GET', `/api/analyses/${V}/review-sets`)).body as { id: number; label: string }[];
    expect(sets.map((s) => s.label)).toContain('Before asking to unblind');
    setId = sets.find((s) => s.label === 'Before asking to unblind')!.id;
    const set = await until('the review set', async () => (await api(live.browser, 'GET', `/api/analyses/${V}/review-sets/${setId}`)).body, (s) => s.state !== 'running');
    expect(set.state).toBe('succeeded');

    await page.goto(`${live.server.url}/a/${V}/fits`);
    await page.getByRole('table', { name: 'Review sets' }).getByRole('link', { name: 'Before asking to unblind' }).click();
    await page.waitForURL(new RegExp(`/a/${V}/review-sets/${setId}$`));
    await page.getByText('These fits inform the collaboration’s own statistical review; they do not replace it.').waitFor();
    const members = page.getByRole('table', { name: 'Fits of the set' });
    await members.waitFor();
    expect(await members.locator('tbody tr').count()).toBe(set.comparison.rows.length);
    // the fit of every region hides μ while blinded; every finished member says it converged
    const hidden = members.locator('tbody tr', { has: page.getByRole('link', { name: 'μ hidden', exact: true }) });
    await expect(hidden.textContent()).resolves.toContain('μ hidden: pulls and constraints only');
    expect(await members.getByText('Converged', { exact: true }).count()).toBe(set.comparison.rows.filter((r: { status: string }) => r.status === 'converged').length);
    // a number on the page is the stored one: expected at μ = 1
    const expected = set.comparison.rows.find((r: { variant: string }) => r.variant === 'expected-1');
    await members.getByText(expected.mu.value.toFixed(2), { exact: false }).first().waitFor();
    await screenshot(page, 'review-set');
    await checkAccessibility(page, 'review set');
  });

  it('keeps the parameters that move by default, shows all on request, and follows a looser threshold', async () => {
    const { page } = live.browser;
    const set = (await api(live.browser, 'GET', `/api/analyses/${V}/review-sets/${setId}`)).body;
    const params = set.comparison.parameters as Parameter[];
    const moving = (t: { pull: number; constraint: number }) => params.filter((p) => p.pullSpread > t.pull || p.constraintSpread > t.constraint).map((p) => p.name);
    const grid = page.getByRole('table', { name: 'Pulls and constraints across the set' });
    const shown = () => grid.locator('tbody th[scope="row"] span.font-mono').allTextContents();
    const names = moving(MOVES);
    if (names.length) expect((await shown()).sort()).toEqual([...names].sort());
    else await grid.getByText('No parameter moves beyond these thresholds').waitFor();
    await page.getByRole('radio', { name: `All (${params.length})` }).check({ force: true });
    await expect.poll(async () => (await shown()).length).toBe(params.length);
    await screenshot(page, 'review-set-all-parameters');
    await page.getByRole('radio', { name: /That move/ }).check({ force: true });
    await page.getByRole('radio', { name: '0.25' }).check({ force: true });
    await page.getByRole('radio', { name: '0.1' }).check({ force: true });
    const looser = moving({ pull: 0.25, constraint: 0.1 });
    await expect.poll(async () => (await shown()).sort()).toEqual([...looser].sort());
    expect(looser.length).toBeGreaterThanOrEqual(names.length);
    await screenshot(page, 'review-set-moves');
  });

  it('starts a variant fit from the form: a parameter held at its best fit, μ hidden while blinded', async () => {
    await as(live, 'otto@lantern.example');
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/${V}/fits`);
    const form = page.getByRole('form', { name: 'Run a fit' });
    await form.getByText('Variant:').click();
    await form.getByRole('button', { name: 'Hold a parameter' }).click();
    await form.getByLabel('Parameter held (1)').fill('flare_id');
    await form.getByLabel('Hide μ').check();
    expect(await form.getByRole('radio', { name: 'Observed data, all regions' }).isChecked()).toBe(true);
    await form.getByLabel('Label').fill('flare_id held, μ hidden');
    await form.getByRole('radio', { name: 'Quick' }).check();
    await screenshot(page, 'fit-form-variant');
    await form.getByRole('button', { name: 'Run the fit' }).click();
    await page.waitForURL(/\/a\/vireon-search\/fits\/\d+$/);
    const id = Number(new URL(page.url()).pathname.split('/').pop());
    const fit = await until('the variant fit', async () => (await api(live.browser, 'GET', `/api/analyses/${V}/fits/${id}`)).body, (f) => !['queued', 'running'].includes(f.state));
    expect(fit.state).toBe('succeeded');
    expect(fit.options).toMatchObject({ dataset: 'observed', hiddenMu: true, hold: [{ parameter: 'flare_id', value: 'best' }] });
    await page.getByText('Signal strength: hidden').waitFor({ timeout: 30_000 });
    await page.getByText(/Variant: μ hidden · flare_id held at its best fit/).waitFor();
    expect(await page.getByRole('navigation', { name: 'Fit result views' }).getByRole('link', { name: 'Impact ranking' }).count()).toBe(0);
    await screenshot(page, 'fit-hidden-mu');
  });

  it('shows the server’s refusal of a variant next to the field it names, and stores nothing', async () => {
    const { page } = live.browser;
    const before = ((await api(live.browser, 'GET', `/api/analyses/${V}/fits`)).body as unknown[]).length;
    await page.goto(`${live.server.url}/a/${V}/fits`);
    const form = page.getByRole('form', { name: 'Run a fit' });
    await form.getByText('Variant:').click();
    await form.getByRole('button', { name: 'Hold a parameter' }).click();
    await form.getByLabel('Parameter held (1)').fill('no_such');
    await form.getByRole('button', { name: 'Run the fit' }).click();
    const field = form.getByLabel('Parameter held (1)');
    await expect.poll(() => field.getAttribute('aria-invalid')).toBe('true');
    const describedBy = (await field.getAttribute('aria-describedby'))!;
    await expect(page.locator(`[id="${describedBy}"]`).textContent()).resolves.toContain('there is no parameter "no_such"');
    await form.getByRole('alert').getByText(/The fit cannot be started/).waitFor();
    expect(((await api(live.browser, 'GET', `/api/analyses/${V}/fits`)).body as unknown[]).length).toBe(before);
    await form.getByLabel('Parameter held (1)').scrollIntoViewIfNeeded();
    await screenshot(page, 'fit-form-field-error');
  });

  it('runs the checks of a parameter from its diagnosis and lists them with links to their fits', async () => {
    const { page } = live.browser;
    const fits = (await api(live.browser, 'GET', `/api/analyses/${C}/fits`)).body as { id: number; label: string }[];
    const observed = fits.find((f) => f.label === 'Observed, full impacts')!;
    await until('the observed fit', async () => (await api(live.browser, 'GET', `/api/analyses/${C}/fits/${observed.id}`)).body, (f) => !['queued', 'running'].includes(f.state));
    await page.goto(`${live.server.url}/a/${C}/fits/${observed.id}/diagnostics?parameter=halo_norm`);
    const panel = page.getByRole('article', { name: 'Diagnosis of halo_norm' });
    await panel.waitFor({ timeout: 120_000 });
    await panel.getByRole('button', { name: 'Check this parameter' }).click();
    const list = panel.getByRole('list', { name: 'Checks of halo_norm' });
    await list.waitFor();
    expect(await list.getByRole('listitem').count()).toBe(2);
    await list.getByRole('link', { name: 'halo_norm split by region' }).waitFor();
    // the list follows the checks until they end
    await expect.poll(() => list.getByText('Finished', { exact: true }).count(), { timeout: 120_000, interval: 500 }).toBe(2);
    await panel.getByRole('region', { name: 'Checks of this parameter' }).scrollIntoViewIfNeeded();
    await screenshot(page, 'diagnosis-checks');
    await list.getByRole('link', { name: 'halo_norm split by region' }).click();
    await page.getByRole('table', { name: 'Decorrelation tests' }).waitFor();
    await screenshot(page, 'fit-decorrelated');
  });
});
