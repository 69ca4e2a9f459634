import { describe, expect, it } from 'vitest';
import { demoScenario } from '../../server/seed/scenario';
import { screenshot, serverAndBrowser, signIn } from './support';

/** The contact's CSV: a shape variation of the continuum in CR-shower, up and down on the same side of the nominal in bin 1. */
function variationCsv() {
  const model = demoScenario().analyses.find((a) => a.slug === 'vireon-search')!.model;
  const nominal = model.templates.find((t) => t.region === 'CR-shower' && t.process === 'continuum')!.nominal;
  const rows = nominal.map((n, b) => {
    const tilt = 0.02 * ((2 * b) / (nominal.length - 1) - 1);
    return b === 0 ? `CR-shower,continuum,shape,1,${(n * 1.03).toFixed(3)},${(n * 1.01).toFixed(3)}` : `CR-shower,continuum,shape,${b + 1},${(n * (1 + tilt)).toFixed(3)},${(n * (1 - tilt)).toFixed(3)}`;
  });
  return ['region,process,kind,bin,up,down', ...rows].join('\n') + '\n';
}

describe('a systematics contact uploads variations and a convener accepts them', () => {
  const live = serverAndBrowser();

  it('the contact previews the upload with its warning, saves it and submits the entry', async () => {
    const { page } = live.browser;
    await signIn(page, live.server.url, 'juno@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/entries/calo_nonlin`);
    await page.getByRole('heading', { name: /Calorimeter non-linearity/ }).first().waitFor();
    await page.getByLabel('Variation file (CSV or JSON)').setInputFiles({ name: 'calo_nonlin.csv', mimeType: 'text/csv', buffer: Buffer.from(variationCsv()) });
    await page.getByRole('button', { name: 'Preview', exact: true }).click();
    const preview = page.getByRole('region', { name: 'Preview of the upload' });
    await preview.waitFor();
    await preview.getByText(/same side of the nominal in bin 1/).first().waitFor();
    await screenshot(page, 'entry-upload-preview');

    await page.getByRole('button', { name: /^save \d+ effect/i }).click();
    await page.getByText('calo_nonlin.csv').first().waitFor();
    await page.getByRole('button', { name: 'Submit for review' }).click();
    await page.getByText('Submitted', { exact: true }).first().waitFor();
    await screenshot(page, 'entry-submitted');
  });

  it('the conveners are e-mailed, and the admin reads it in the outbox', async () => {
    const { page, context } = live.browser;
    await context.clearCookies();
    await signIn(page, live.server.url, 'admin@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/admin/outbox`);
    await page.getByText('[vireon-search] calo_nonlin awaits review').first().waitFor();
    await page.getByText('mira@lantern.example').first().waitFor();
    await screenshot(page, 'outbox');
  });

  it('the convener accepts the entry and its owner is told', async () => {
    const { page, context } = live.browser;
    await context.clearCookies();
    await signIn(page, live.server.url, 'mira@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/a/vireon-search/entries/calo_nonlin`);
    await page.getByRole('button', { name: 'Accept', exact: true }).click();
    await page.getByText('Accepted', { exact: true }).first().waitFor();
    await screenshot(page, 'entry-accepted');

    await context.clearCookies();
    await signIn(page, live.server.url, 'admin@lantern.example');
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    await page.goto(`${live.server.url}/admin/outbox`);
    await page.getByText('[vireon-search] calo_nonlin was accepted').first().waitFor();
  });

  it('keeps the register responsive with 500 entries (prints the time to filter and to sort)', async () => {
    const { page } = live.browser;
    // an admin creates an analysis whose model file has 500 systematics; the admin is then made its analyst
    const big = demoScenario().analyses.find((a) => a.slug === 'vireon-search')!.model;
    const systematics = Array.from({ length: 500 }, (_, i) => ({ ...big.systematics![i % big.systematics!.length], key: `sys_${String(i).padStart(3, '0')}`, label: `Systematic ${i}` }));
    const result = await page.evaluate(
      async ({ model }) => {
        const token = async () => (await (await fetch('/api/auth/csrf')).json()).token;
        const post = async (url: string, body: unknown) =>
          fetch(url, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': await token() }, body: JSON.stringify(body) });
        await post('/api/analyses', { slug: 'five-hundred', name: 'Five hundred systematics' });
        await post('/api/analyses/five-hundred/members', { email: 'admin@lantern.example', role: 'analyst' });
        const form = new FormData();
        form.append('file', new Blob([JSON.stringify(model)], { type: 'application/json' }), 'big.json');
        const res = await fetch('/api/analyses/five-hundred/exchange', { method: 'POST', headers: { 'x-csrf-token': await token() }, body: form });
        return res.status;
      },
      // the search's mass hypotheses name its own systematics, which this copy renames: left out
      { model: { ...big, systematics, signalHypotheses: undefined } },
    );
    expect(result).toBe(201);
    await page.goto(`${live.server.url}/a/five-hundred/register`);
    await page.getByText(/Showing 500 of 500/).waitFor();
    const filter = page.getByLabel(/filter entries/i);
    const t0 = Date.now();
    await filter.fill('sys_49');
    await page.getByText(/Showing 10 of 500/).waitFor();
    const filterMs = Date.now() - t0;
    await filter.fill('');
    await page.getByText(/Showing 500 of 500/).waitFor();
    const t1 = Date.now();
    await page.getByRole('button', { name: /^Largest effect/ }).click();
    await page.locator('th[aria-sort="ascending"], th[aria-sort="descending"]').first().waitFor();
    const sortMs = Date.now() - t1;
    console.log(`register with 500 entries: filter ${filterMs} ms, sort ${sortMs} ms (including the browser's round trip through playwright)`);
    await screenshot(page, 'register-500');
  });
});
