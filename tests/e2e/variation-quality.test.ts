import { describe, expect, it } from 'vitest';
import { demoScenario } from '../../server/seed/scenario';
import { api, checkAccessibility, screenshot, serverAndBrowser, signIn } from './support';

/**
 * Variation quality on an entry's page, as its systematics contact (Juno owns calo_nonlin, a draft
 * with shape effects): each shift's error and its χ² tests, smoothing an effect and restoring the
 * upload, and one systematic from a set of alternative templates whose second component becomes an
 * entry of its own.
 */

const SLUG = 'vireon-search';
const KEY = 'calo_nonlin';

type Effect = { id: number; region: string; process: string; kind: string; up: number[]; smoothing: { method: string } | null };

/** Four alternative templates of CR-shower × continuum: two tilts, a wiggle and an offset. */
function alternativesCsv() {
  const model = demoScenario().analyses.find((a) => a.slug === SLUG)!.model;
  const nominal = model.templates.find((t) => t.region === 'CR-shower' && t.process === 'continuum')!.nominal;
  const n = nominal.length;
  const shapes = [(b: number) => 1 + 0.04 * (b / (n - 1) - 0.5), (b: number) => 1 - 0.03 * (b / (n - 1) - 0.5), (b: number) => 1 + 0.02 * Math.sin(b), (b: number) => 1.015 + 0.01 * (b / (n - 1))];
  const rows = shapes.flatMap((f, k) => nominal.map((v, b) => `CR-shower,continuum,alt${k + 1},${b + 1},${(v * f(b)).toFixed(3)}`));
  return ['region,process,template,bin,yield', ...rows].join('\n') + '\n';
}

describe('a systematics contact checks the precision of a variation, smooths it, restores it, and uploads alternative templates', () => {
  const live = serverAndBrowser();
  const entry = async () => (await api(live.browser, 'GET', `/api/analyses/${SLUG}/entries/${KEY}`)).body as { effects: Effect[]; revisions: { action: string }[] };

  it('shows each shift with its error and the χ² tests, saying the errors were estimated', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'juno@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/${SLUG}/entries/${KEY}`);
    const card = page.getByRole('article', { name: 'Effect on CR-low × continuum' });
    await card.waitFor();
    await card.getByRole('img', { name: /each shift with its error/ }).waitFor();
    const table = card.getByRole('table', { name: 'Precision of the shifts on CR-low × continuum' });
    expect(await table.getByRole('row').count()).toBe(3);
    await table.getByText(/χ² .* \/ 16/).first().waitFor();
    await card.getByText(/estimated from the template variance/).waitFor();
    await card.scrollIntoViewIfNeeded();
    await card.screenshot({ path: 'test-output/screenshots/entry-precision.png' });
  });

  it('smooths a shape effect by local regression after a preview, refused first for a window wider than the region', async () => {
    const { page } = live.browser;
    const before = (await entry()).effects.find((e) => e.region === 'CR-low' && e.process === 'continuum')!;
    const card = page.getByRole('article', { name: 'Effect on CR-low × continuum' });
    await card.getByRole('button', { name: 'Smooth CR-low × continuum…' }).click();
    const panel = page.getByRole('region', { name: 'Smooth CR-low × continuum' });
    await panel.getByRole('radio', { name: 'Local regression' }).check();
    // the server's refusal, with its field
    await panel.getByLabel('Window (bins)').fill('40');
    await panel.getByRole('button', { name: /^Preview the smoothing/ }).click();
    await panel.getByRole('alert').getByText(/larger than region "CR-low"/).waitFor();
    await panel.getByText('at most 16', { exact: true }).waitFor();
    await panel.getByLabel('Window (bins)').fill('5');
    await panel.getByRole('button', { name: /^Preview the smoothing/ }).click();
    const comparison = panel.getByRole('region', { name: 'Before and after smoothing' });
    await comparison.waitFor();
    await comparison.getByRole('img', { name: /^Up shift/ }).waitFor();
    await checkAccessibility(page, 'entry with a smoothing preview');
    await panel.scrollIntoViewIfNeeded();
    await panel.screenshot({ path: 'test-output/screenshots/entry-smooth-preview.png' });
    expect((await entry()).effects.find((e) => e.id === before.id)!.smoothing).toBeNull();

    await panel.getByRole('button', { name: 'Save the smoothed effect' }).click();
    await card.getByRole('status').getByText('Saved, smoothed with local regression over 5 bins with 2 robustness iterations, as a new revision.').waitFor();
    // the card says how it was smoothed, by whom and when
    await card.getByText(/with local regression over 5 bins with 2 robustness iterations by Juno Feldspire/).waitFor();
    const smoothed = (await entry()).effects.find((e) => e.id === before.id)!;
    expect(smoothed.smoothing?.method).toBe('local-regression');
    expect(smoothed.up).not.toEqual(before.up);
    await card.screenshot({ path: 'test-output/screenshots/entry-smoothed.png' });
  });

  it('restores the upload', async () => {
    const { page } = live.browser;
    const card = page.getByRole('article', { name: 'Effect on CR-low × continuum' });
    const original = (await entry()).effects.find((e) => e.region === 'CR-low' && e.process === 'continuum')!;
    await card.getByRole('button', { name: 'Restore the upload of CR-low × continuum' }).click();
    await card.getByRole('button', { name: 'Restore', exact: true }).click();
    await card.getByText('The variation as uploaded is back, as a new revision.').waitFor();
    await expect.poll(async () => (await card.getByText(/^Smoothed$/).count())).toBe(0);
    const restored = (await entry()).effects.find((e) => e.id === original.id)!;
    expect(restored.smoothing).toBeNull();
    expect((await entry()).revisions.filter((r) => r.action === 'effect.smoothed')).toHaveLength(2);
  });

  it('uploads alternative templates as principal components, and the second becomes an entry of its own', async () => {
    const { page } = live.browser;
    await page.getByLabel('Alternative templates (CSV or JSON)').setInputFiles({ name: 'alternatives.csv', mimeType: 'text/csv', buffer: Buffer.from(alternativesCsv()) });
    await page.getByRole('radio', { name: 'Principal components' }).check();
    await page.getByLabel(/Keep components up to/).fill('99');
    await page.getByRole('button', { name: 'Preview the alternative templates' }).click();
    const preview = page.getByRole('region', { name: 'Preview of the alternative templates' });
    await preview.waitFor();
    await preview.getByText(`new entry ${KEY}_pc2`).waitFor();
    await preview.getByText(/component 1: .* of the variance/).waitFor();
    await checkAccessibility(page, 'entry with a preview of alternative templates');
    await preview.scrollIntoViewIfNeeded();
    await preview.screenshot({ path: 'test-output/screenshots/entry-alternatives-preview.png' });

    await page.getByRole('button', { name: /^Save \d+ effects$/ }).click();
    const status = page.getByRole('status').filter({ hasText: 'Saved the principal components' });
    await status.waitFor();
    await status.getByRole('link', { name: `${KEY}_pc2`, exact: true }).click();
    await page.waitForURL(new RegExp(`/entries/${KEY}_pc2$`));
    await page.getByRole('article', { name: 'Effect on CR-shower × continuum' }).waitFor();
    await page.goto(`${live.server.url}/a/${SLUG}/register`);
    await page.getByRole('table', { name: 'Register entries' }).getByRole('link', { name: `${KEY}_pc2`, exact: true }).waitFor();
    await screenshot(page, 'register-with-component');
  });
});
