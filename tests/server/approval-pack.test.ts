import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { strFromU8, unzipSync } from 'fflate';
import { analyses, fits } from '../../server/db/schema';
import { MARK, markSignalCounts } from './blinded-scan';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const C = '/api/analyses/cascade-rate';
const V = '/api/analyses/vireon-search';
const LABELS = { experiment: 'LANTERN', status: 'Internal', luminosity: '12.5 fb⁻¹', energy: '9 TeV' };

/** The files of a zip response, by name, as text. */
async function unzipped(client: Client, path: string) {
  const res = await client.get(path).responseType('blob');
  expect(res.status, String(res.body)).toBe(200);
  expect(res.headers['content-type']).toMatch(/application\/zip/);
  return Object.fromEntries(Object.entries(unzipSync(new Uint8Array(res.body as Buffer))).map(([name, bytes]) => [name, strFromU8(bytes)]));
}

/** Every chart of a pack: each <svg> with its plot-label text. */
function charts(html: string) {
  return [...html.matchAll(/<svg\b[\s\S]*?<\/svg>/g)].map((m) => ({ svg: m[0], label: /<text class="plot-label"[^>]*>([\s\S]*?)<\/text>/.exec(m[0])?.[1].replace(/<[^>]+>/g, '') ?? null }));
}

/** Anything a browser would fetch from elsewhere, or run. */
function outsideReferences(html: string) {
  return [
    ...html.matchAll(/<script\b/gi),
    ...html.matchAll(/\b(?:src|href|xlink:href|action|poster|srcset)\s*=\s*["']?\s*(?:https?:)?\/\//gi),
    ...html.matchAll(/url\(\s*["']?\s*(?:https?:)?\/\//gi),
    ...html.matchAll(/@import|@font-face|<link\b|<iframe\b|<object\b|<embed\b/gi),
    ...html.matchAll(/https?:\/\//gi),
  ].map((m) => m[0]);
}

describe('the approval pack', () => {
  let t: TestApp;
  let analyst: Client;
  let convener: Client;
  let reader: Client;
  async function runFit(base: string, version: number, options: object, label = '') {
    const started = await analyst.send('post', `${base}/fits`, { version, label, options });
    expect(started.status).toBe(202);
    await t.fits.idle();
    return (await analyst.get(`${base}/fits/${started.body.id}`)).body;
  }
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, convener, reader] = await Promise.all([DEMO.analyst, DEMO.convener, DEMO.reader].map((e) => signedIn(t.app, e)));
  });
  afterAll(async () => t.close());

  it('lets a convener set the plot labels, which the overview then carries', async () => {
    expect((await analyst.get(C)).body.analysis.plotLabels).toEqual({ experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' });
    expect((await analyst.send('put', `${C}/plot-labels`, LABELS)).status).toBe(403);
    const res = await convener.send('put', `${C}/plot-labels`, LABELS);
    expect(res.status).toBe(200);
    expect(res.body).toEqual(LABELS);
    expect((await reader.get(C)).body.analysis.plotLabels).toEqual(LABELS);
  });

  it.each([
    ['experiment', { ...LABELS, experiment: 'X'.repeat(41) }],
    ['status', { ...LABELS, status: 'Internal\ndraft' }],
    ['luminosity', { ...LABELS, luminosity: '<b>12</b>' }],
    ['energy', { ...LABELS, energy: 9 }],
    ['energy', { experiment: 'LANTERN', status: 'Internal', luminosity: '1 fb⁻¹' }],
    ['colour', { ...LABELS, colour: 'red' }],
  ])('refuses plot labels with a bad %s (400 naming it), and saves nothing', async (field, body) => {
    const before = (await t.database.db.select({ l: analyses.plotLabels }).from(analyses).where(eq(analyses.slug, 'cascade-rate')))[0].l;
    const res = await convener.send('put', `${C}/plot-labels`, body);
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body.error.issues)).toContain(field);
    const after = (await t.database.db.select({ l: analyses.plotLabels }).from(analyses).where(eq(analyses.slug, 'cascade-rate')))[0].l;
    expect(after).toEqual(before);
  });

  it('is one self-contained page: the version, its hash and approval state, the options, the engine and input hashes, the labels on every chart, and no script or outside address', async () => {
    await convener.send('put', `${C}/plot-labels`, LABELS);
    const version = (await analyst.send('post', `${C}/versions`, { note: 'pack look' })).body;
    const fit = await runFit(C, version.number, { dataset: 'observed', impacts: 'full', scan: true, limit: true }, 'Nominal for the pack');
    expect(fit.state).toBe('succeeded');
    const res = await reader.get(`${C}/fits/${fit.id}/pack?format=html`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/html/);
    expect(res.headers['content-disposition']).toMatch(/attachment; filename="?cascade-rate-fit-\d+-approval-pack\.html/);
    const html: string = res.text;
    expect(outsideReferences(html)).toEqual([]);
    expect(html).toContain('Cascade production rate');
    expect(html).toContain('Nominal for the pack');
    expect(html).toContain(version.sha256);
    expect(html).toContain(fit.provenance.engineHash);
    expect(html).toContain(fit.provenance.inputSha256);
    expect(html).toContain(fit.provenance.engineVersion);
    expect(html).toContain('Not put forward for approval');
    expect(html).toContain('do not replace it');
    for (const section of ['Summary', 'Pulls', 'Impacts on μ, ranked', 'Correlations', 'Distributions per region', 'Uncertainty breakdown', 'The register as frozen in version', 'Question log', 'Blinding log'])
      expect(html, section).toContain(`<h2>${section}`);
    // pulls, impacts, correlations, two regions pre- and post-fit, grouped impacts
    const drawn = charts(html);
    expect(drawn.length).toBeGreaterThanOrEqual(8);
    for (const c of drawn) expect(c.label, c.svg.slice(0, 120)).toBe('LANTERN Internal · 12.5 fb⁻¹ · 9 TeV');
    expect(html).toContain(fit.result.summary.mu.value.toPrecision(4).replace(/0+$/, '').replace(/\.$/, ''));
    // a p-value far below any rounding is written as it is, never as 0
    expect(html).not.toMatch(/p₀ = 0\)/);
  });

  it('zips the page with the result as JSON and its tables as CSV, which unzip as they were', async () => {
    const [fit] = (await analyst.get(`${C}/fits`)).body;
    const files = await unzipped(reader, `${C}/fits/${fit.id}/pack?format=zip`);
    const names = Object.keys(files).map((n) => n.split('/').pop());
    expect(names).toEqual(
      expect.arrayContaining(['approval-pack.html', `cascade-rate-fit-${fit.id}.json`, ...['summary', 'parameters', 'nuisance', 'groups', 'correlation'].map((x) => `cascade-rate-fit-${fit.id}-${x}.csv`)]),
    );
    const html = Object.entries(files).find(([n]) => n.endsWith('.html'))![1];
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html).toContain(fit.provenance.engineHash);
    const json = JSON.parse(Object.entries(files).find(([n]) => n.endsWith('.json'))![1]);
    expect(json.result.status).toBe('converged');
    expect(Object.entries(files).find(([n]) => n.endsWith('-nuisance.csv'))![1]).toMatch(/^name,group,pull/);
  });

  it('refuses a format it does not make', async () => {
    const [fit] = (await analyst.get(`${C}/fits`)).body;
    const res = await reader.get(`${C}/fits/${fit.id}/pack?format=pdf`);
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toEqual(['format']);
  });

  it('shows a failed fit with its failure and convergence report, and no number of the minimum', async () => {
    const admin = await signedIn(t.app, DEMO.admin);
    await admin.send('post', '/api/analyses', { slug: 'degenerate-pack', name: 'Degenerate', blinded: false });
    await admin.send('post', '/api/analyses/degenerate-pack/members', { email: DEMO.analyst, role: 'analyst' });
    const model = {
      format: 'plumbline.model',
      version: 1,
      name: 'degenerate',
      regions: [{ key: 'CR', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1, 2], observed: [100, 80] }],
      processes: [
        { key: 'a', kind: 'background' },
        { key: 'b', kind: 'background' },
      ],
      floatingNorms: [
        { key: 'k_a', targets: [{ region: 'CR', process: 'a' }] },
        { key: 'k_b', targets: [{ region: 'CR', process: 'b' }] },
      ],
      templates: [
        { region: 'CR', process: 'a', nominal: [50, 40] },
        { region: 'CR', process: 'b', nominal: [50, 40] },
      ],
    };
    expect((await analyst.upload('/api/analyses/degenerate-pack/exchange', { name: 'd.json', content: JSON.stringify(model) })).status).toBe(201);
    await analyst.send('post', '/api/analyses/degenerate-pack/versions', {});
    const fit = await runFit('/api/analyses/degenerate-pack', 1, { dataset: 'observed', controlOnly: true, impacts: 'full' });
    expect(fit.state).toBe('failed');
    const res = await analyst.get(`/api/analyses/degenerate-pack/fits/${fit.id}/pack`);
    expect(res.status).toBe(200);
    const html: string = res.text;
    expect(html).toContain('The fit failed');
    expect(html).toContain('<h2>Convergence');
    expect(html).not.toContain('<svg');
    for (const section of ['Summary', 'Pulls', 'Impacts', 'Correlations', 'Distributions', 'Uncertainty breakdown']) expect(html, section).not.toContain(`<h2>${section}`);
    expect(html).not.toMatch(/μ̂|Newton decrement|Condition number/);
    const files = await unzipped(analyst, `/api/analyses/degenerate-pack/fits/${fit.id}/pack?format=zip`);
    expect(Object.keys(files).filter((n) => n.endsWith('.csv'))).toEqual([]);
  });

  it('shows no μ number of a fit with μ hidden', async () => {
    const fit = await runFit(C, (await analyst.send('post', `${C}/versions`, {})).body.number, { dataset: 'observed', hiddenMu: true, impacts: 'quick' });
    expect(fit.state).toBe('succeeded');
    const html = (await reader.get(`${C}/fits/${fit.id}/pack`)).text;
    expect(html).toContain('μ is hidden in this fit');
    expect(html).not.toContain('μ̂ (best-fit signal strength)');
    expect(html).not.toContain('<h2>Impacts on μ, ranked');
    expect(html).toContain('<h2>Pulls');
  });

  describe('while the analysis is blinded', () => {
    let version: number;
    beforeAll(async () => {
      await markSignalCounts(t, 'vireon-search');
      version = (await analyst.send('post', `${V}/versions`, { note: 'blinded pack' })).body.number;
    });

    it('carries no observed count of a blinded region, in the page or the zip', async () => {
      const fit = await runFit(V, version, { dataset: 'observed', controlOnly: true, impacts: 'none', expected: false });
      expect(fit.state).toBe('succeeded');
      const html = (await reader.get(`${V}/fits/${fit.id}/pack`)).text;
      expect(html).toContain('observed counts withheld while the analysis is blinded');
      expect(MARK.test(html)).toBe(false);
      const files = await unzipped(reader, `${V}/fits/${fit.id}/pack?format=zip`);
      for (const [name, text] of Object.entries(files)) expect(MARK.test(text), name).toBe(false);
    });

    it('refuses a fit that read blinded data with the same reason as its page (409)', async () => {
      const fit = await runFit(V, version, { dataset: 'observed', controlOnly: true, impacts: 'none', expected: false });
      await t.database.db.update(fits).set({ regionsInFit: ['SR-core', 'CR-low'] }).where(eq(fits.id, fit.id));
      // the list reads the row (a finished fit's head response is kept encoded as it was)
      const head = (await reader.get(`${V}/fits`)).body.find((f: { id: number }) => f.id === fit.id);
      expect(head.withheld).toMatch(/SR-core/);
      for (const format of ['html', 'zip']) {
        const res = await reader.get(`${V}/fits/${fit.id}/pack?format=${format}`);
        expect(res.status).toBe(409);
        expect(res.body.error.message).toBe(head.withheld);
      }
    });
  });
});
