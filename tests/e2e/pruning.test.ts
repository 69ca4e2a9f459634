import { describe, expect, it } from 'vitest';
import type { PruningOverview } from '@shared/schemas/register';
import { demoScenario } from '../../server/seed/scenario';
import { api, checkAccessibility, keyboardReach, screenshot, serverAndBrowser, signIn, type Browser } from './support';

/**
 * Pruning on the demo's search, as its analyst: the register marks the candidates, the pruning
 * screen previews a selection against the latest fit that may be shown and prunes it with a
 * comment, one effect is restored, and the entry page marks what stays pruned. Then what an upload
 * does to the result, on the measurement: a contact saves a steeper energy-scale shape and the
 * entry page shows the refit. A reader sees the pruning screen without its controls.
 */

const V = 'vireon-search';

async function as(live: { browser: Browser; server: { url: string } }, email: string) {
  await live.browser.context.clearCookies();
  await signIn(live.browser.page, live.server.url, email);
  await live.browser.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

/** energy_scale on SR × cascade tilted by ±20 % across its bins: a real change to μ̂. */
function steeperScaleCsv() {
  const nominal = demoScenario().analyses.find((a) => a.slug === 'cascade-rate')!.model.templates.find((t) => t.region === 'SR' && t.process === 'cascade')!.nominal;
  const last = nominal.length - 1;
  const rows = nominal.map((n, b) => `SR,cascade,shape,${b + 1},${(n * (1 + 0.4 * (b / last - 0.5))).toFixed(4)},${(n * (1 - 0.4 * (b / last - 0.5))).toFixed(4)}`);
  return ['region,process,kind,bin,up,down', ...rows].join('\n') + '\n';
}

describe('an analyst prunes effects after seeing what pruning changes, and a contact sees what an upload does', () => {
  const live = serverAndBrowser();
  const overview = async () => (await api(live.browser, 'GET', `/api/analyses/${V}/pruning`)).body as PruningOverview;

  it('marks the candidates in the register, and lists them by rule on the pruning screen', async () => {
    await as(live, 'otto@lantern.example');
    const { page } = live.browser;
    const before = await overview();
    expect(before.candidates.length).toBeGreaterThan(50);
    const small = before.candidates.filter((c) => c.reason?.rule === 'small');
    expect(small.length).toBeGreaterThan(0);

    await page.goto(`${live.server.url}/a/${V}/register`);
    const register = page.getByRole('table', { name: 'Register entries' });
    const key = small[0].entry.key;
    const count = before.candidates.filter((c) => c.entry.key === key).length;
    const marker = register.getByRole('link', { name: `prune? ${count}: ${key}, ${count} effect${count === 1 ? '' : 's'} the pruning rules propose` });
    await marker.waitFor();
    await marker.click();
    await page.waitForURL(/\/pruning$/);

    await page.getByRole('table', { name: 'Candidates: Below 0.1 % in every bin' }).waitFor();
    const flat = page.getByRole('table', { name: 'Candidates: Shapes flat within their noise (p above 0.05)' });
    expect(await flat.getByRole('row').count()).toBe(before.candidates.length - small.length + 1);
    await flat.getByText('errors estimated').first().waitFor();
    await flat.getByText(/^κ \d\.\d{4} \/ \d\.\d{4}$/).first().waitFor();
  });

  it('previews a selection: the latest fit that may be shown, refitted without it, with the pulls and constraints that change', async () => {
    const { page } = live.browser;
    await page.getByRole('checkbox', { name: /^Select all \d+ small effects$/ }).check();
    const flat = page.getByRole('table', { name: 'Candidates: Shapes flat within their noise (p above 0.05)' });
    await flat.getByRole('checkbox').nth(0).check();
    await flat.getByRole('checkbox').nth(1).check();
    const small = (await overview()).candidates.filter((c) => c.reason?.rule === 'small').length;
    await page.getByText(`${small + 2} effects selected`).waitFor();
    // pruning waits for a preview
    expect(await page.getByRole('button', { name: `Prune ${small + 2} effects` }).isDisabled()).toBe(true);
    await page.getByRole('button', { name: 'Preview what pruning changes' }).click();
    const result = page.getByRole('region', { name: 'What pruning changes' });
    await result.getByText('Refit converged').waitFor({ timeout: 90_000 });
    // the search is blinded: its latest fit that may be shown hides μ, so the pulls and constraints are compared
    await result.getByText(/hides μ while the analysis is blinded|holds μ/).waitFor();
    await result.getByText(/^Pulls and constraints that move by more than 0\.1 \(\d+\)$/).waitFor();
    await checkAccessibility(page, 'pruning with a preview');
    await page.evaluate(() => window.scrollTo(0, 0));
    await screenshot(page, 'pruning-preview');
  });

  it('prunes the selection only with a comment, and restores one effect', async () => {
    const { page } = live.browser;
    const before = await overview();
    const small = before.candidates.filter((c) => c.reason?.rule === 'small').length;
    const prune = page.getByRole('button', { name: `Prune ${small + 2} effects` });
    await prune.click();
    await page.getByText(/Say why these effects can go/).waitFor();
    expect((await overview()).pruned).toEqual([]);

    await page.getByLabel('Why these effects can go (required)').fill('Below the analysis threshold, or flat within their noise; normalisation kept.');
    await prune.click();
    await page.getByRole('status').filter({ hasText: `Pruned ${small + 2} effects.` }).waitFor();
    const after = await overview();
    expect(after.pruned).toHaveLength(small + 2);
    expect(after.candidates).toHaveLength(before.candidates.length - small - 2);

    const pruned = page.getByRole('table', { name: 'Pruned effects' });
    expect(await pruned.getByRole('row').count()).toBe(small + 2 + 1);
    const shape = after.pruned.find((p) => p.pruned === 'normalisation')!;
    await pruned.getByText(`κ ${shape.normalisation!.up.toFixed(4)} / ${shape.normalisation!.down.toFixed(4)}`).waitFor();
    await page.evaluate(() => window.scrollTo(0, 0));
    await screenshot(page, 'pruning-pruned');

    await pruned.getByRole('button', { name: `Restore ${shape.entry.key} on ${shape.region} × ${shape.process} (shape)` }).click();
    await expect.poll(async () => (await pruned.getByRole('row').count())).toBe(small + 2);
    const restored = await overview();
    expect(restored.pruned.some((p) => p.effectId === shape.effectId)).toBe(false);
    expect(restored.candidates.some((c) => c.effectId === shape.effectId)).toBe(true);
    const report = await keyboardReach(page);
    expect(report.unreachable).toEqual([]);
    expect(report.clickableWithoutKeyboard).toEqual([]);

    // the entry of a pruned effect marks it, and its history keeps the comment
    const dropped = restored.pruned.find((p) => p.pruned === 'dropped')!;
    await page.goto(`${live.server.url}/a/${V}/entries/${dropped.entry.key}`);
    const card = page.getByRole('article', { name: `Effect on ${dropped.region} × ${dropped.process}` });
    await card.getByText('Pruned', { exact: true }).waitFor();
    await page.getByText(/Below the analysis threshold, or flat within their noise/).first().waitFor();
    await card.scrollIntoViewIfNeeded();
    await card.screenshot({ path: 'test-output/screenshots/entry-pruned-effect.png' });
  });

  it('shows a reader the pruning screen without its controls', async () => {
    await as(live, 'rafe@lantern.example');
    const { page } = live.browser;
    await page.goto(`${live.server.url}/a/${V}/pruning`);
    await page.getByRole('table', { name: 'Pruned effects' }).waitFor();
    await page.getByText('Analysts change the rules.').waitFor();
    expect(await page.getByRole('checkbox').count()).toBe(0);
    expect(await page.getByRole('button', { name: /^(Preview|Prune \d|Restore|Apply)/ }).count()).toBe(0);
    await checkAccessibility(page, 'pruning as a reader');
  });

  it('shows on the entry page what a saved upload does to the result, once the refit is done', async () => {
    await as(live, 'juno@lantern.example');
    const { page } = live.browser;
    const C = 'cascade-rate';
    const fit = ((await api(live.browser, 'GET', `/api/analyses/${C}/fits`)).body as { id: number; label: string }[]).find((f) => f.label === 'Observed, full impacts')!;
    await page.goto(`${live.server.url}/a/${C}/entries/energy_scale`);
    await page.getByLabel('Variation file (CSV or JSON)').setInputFiles({ name: 'energy_scale_steeper.csv', mimeType: 'text/csv', buffer: Buffer.from(steeperScaleCsv()) });
    await page.getByRole('button', { name: 'Preview', exact: true }).click();
    await page.getByRole('region', { name: 'Preview of the upload' }).waitFor();
    await page.getByRole('button', { name: /^save \d+ effect/i }).click();

    const panel = page.locator('section', { has: page.getByRole('heading', { name: 'What this upload does to the result' }) });
    await panel.getByText('Refit converged').waitFor({ timeout: 90_000 });
    await panel.getByRole('link', { name: 'Observed, full impacts' }).waitFor();
    expect(await panel.getByRole('link', { name: 'Observed, full impacts' }).getAttribute('href')).toBe(`/a/${C}/fits/${fit.id}`);
    const check = (await api(live.browser, 'GET', `/api/analyses/${C}/entries/energy_scale`)).body.impactCheck;
    await panel.screenshot({ path: 'test-output/screenshots/entry-upload-impact.png' });
    expect(check).toMatchObject({ state: 'done', fit: { id: fit.id } });
    const mu = panel.getByLabel('Signal strength before and after');
    const text = (await mu.textContent())!.replace(/→/g, '');
    expect(text).toContain(`${check.mu.before.toFixed(3)} to ${check.mu.after.toFixed(3)}`);
    await panel.getByRole('region', { name: 'Parameter energy_scale' }).getByText(/^#\d+$/).first().waitFor();
    // every parameter the server lists as moved, and only those
    expect(check.moved.length).toBeGreaterThan(0);
    const moved = panel.getByRole('table', { name: 'Parameters that moved with this upload' });
    expect((await moved.getByRole('rowheader').allTextContents()).sort()).toEqual(check.moved.map((m: { name: string }) => m.name).sort());
    await checkAccessibility(page, 'entry with what an upload does');
    await panel.scrollIntoViewIfNeeded();
    await panel.screenshot({ path: 'test-output/screenshots/entry-upload-impact.png' });
  });
});
