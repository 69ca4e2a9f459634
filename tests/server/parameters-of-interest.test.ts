import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exchangeModelSchema, type ExchangeModelInput } from '@shared/schemas/exchange';
import { analyses, modelVersions } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

/** Two signal processes in two regions: μ multiplies "direct", the parameter of interest "mu_two" multiplies "assoc". */
const twoModes = (name: string): ExchangeModelInput => ({
  format: 'plumbline.model',
  version: 2,
  name,
  regions: [
    { key: 'A', role: 'signal', observable: { name: 'x', unit: 'GeV' }, edges: [0, 1, 2, 3], observed: [118, 96, 61] },
    { key: 'B', role: 'signal', observable: { name: 'x', unit: 'GeV' }, edges: [0, 1, 2, 3], observed: [64, 83, 70] },
  ],
  processes: [
    { key: 'direct', kind: 'signal' },
    { key: 'assoc', kind: 'signal' },
    { key: 'bkg', kind: 'background' },
  ],
  parametersOfInterest: [
    {
      key: 'mu_two',
      label: 'Second strength',
      start: 1,
      min: -5,
      max: 10,
      targets: [
        { region: 'A', process: 'assoc' },
        { region: 'B', process: 'assoc' },
      ],
    },
  ],
  templates: [
    { region: 'A', process: 'direct', nominal: [40, 30, 15] },
    { region: 'A', process: 'assoc', nominal: [8, 10, 9] },
    { region: 'A', process: 'bkg', nominal: [70, 55, 38] },
    { region: 'B', process: 'direct', nominal: [10, 8, 5] },
    { region: 'B', process: 'assoc', nominal: [20, 30, 28] },
    { region: 'B', process: 'bkg', nominal: [35, 44, 38] },
  ],
  systematics: [{ key: 'lumi', label: 'Luminosity', effects: [{ region: 'A', process: 'bkg', kind: 'scale', up: 1.05, down: 0.95 }] }],
});

describe('parameters of interest besides μ, from the model file to the fits', () => {
  let t: TestApp;
  let admin: Client;
  let analyst: Client;
  let contourFit = 0;
  async function emptyAnalysis(slug: string) {
    expect((await admin.send('post', '/api/analyses', { slug, name: slug, blinded: false })).status).toBe(201);
    expect((await admin.send('post', `/api/analyses/${slug}/members`, { email: DEMO.analyst, role: 'analyst' })).status).toBe(201);
  }
  beforeAll(async () => {
    t = await createTestApp();
    admin = await signedIn(t.app, DEMO.admin);
    analyst = await signedIn(t.app, DEMO.analyst);
  });
  afterAll(async () => t.close());

  it('stores them on import, serves them with the model, exports them, and freezes them into a version whose fit reports both with their contour', async () => {
    await emptyAnalysis('two-modes');
    // read (and so kept in memory) while empty: the import must replace that copy
    expect((await analyst.get('/api/analyses/two-modes/model')).body.parametersOfInterest).toEqual([]);
    const doc = twoModes('two-modes');
    const imported = await analyst.upload('/api/analyses/two-modes/exchange', { name: 'two-modes.json', content: JSON.stringify(doc) });
    expect(imported.status).toBe(201);
    expect(imported.body).toEqual({ regions: 2, processes: 3, entries: 1, parametersOfInterest: 1, hypotheses: 0 });

    const model = await analyst.get('/api/analyses/two-modes/model');
    expect(model.status).toBe(200);
    expect(model.body.parametersOfInterest).toEqual([{ key: 'mu_two', label: 'Second strength', start: 1, min: -5, max: 10, targets: doc.parametersOfInterest![0].targets }]);

    const exported = await analyst.get('/api/analyses/two-modes/exchange');
    expect(exported.body).toEqual(exchangeModelSchema.parse(doc));
    expect(exported.body.parametersOfInterest).toEqual(doc.parametersOfInterest);

    const frozen = await analyst.send('post', '/api/analyses/two-modes/versions', { note: 'both modes' });
    expect(frozen.status).toBe(201);
    const [analysis] = await t.database.db.select().from(analyses).where(eq(analyses.slug, 'two-modes'));
    const [version] = await t.database.db.select().from(modelVersions).where(and(eq(modelVersions.analysisId, analysis.id), eq(modelVersions.number, frozen.body.number)));
    expect((version.model as { parametersOfInterest?: unknown }).parametersOfInterest).toEqual(doc.parametersOfInterest);

    const started = await analyst.send('post', '/api/analyses/two-modes/fits', { version: frozen.body.number, label: 'both', options: { dataset: 'observed', impacts: 'none', expected: false, contour: ['mu', 'mu_two'] } });
    expect(started.status).toBe(202);
    contourFit = started.body.id;
    await t.fits.idle();
    const fit = (await analyst.get(`/api/analyses/two-modes/fits/${started.body.id}`)).body;
    expect(fit.state).toBe('succeeded');
    expect(fit.result.poi.list.map((p: { name: string }) => p.name)).toEqual(['mu', 'mu_two']);
    expect(fit.result.contour).toMatchObject({ parameters: ['mu', 'mu_two'], failure: null });
    expect(fit.result.contour.levels[0].lines.length).toBeGreaterThan(0);
  });

  it('leaves them out of the export of a model that declares none, and serves an empty list', async () => {
    const exported = await analyst.get('/api/analyses/cascade-rate/exchange');
    expect(exported.status).toBe(200);
    expect('parametersOfInterest' in exported.body).toBe(false);
    expect((await analyst.get('/api/analyses/cascade-rate/model')).body.parametersOfInterest).toEqual([]);
  });

  it('serves a changed parameter of interest at once: a change to its row replaces the model kept in memory', async () => {
    expect((await analyst.get('/api/analyses/two-modes/model')).body.parametersOfInterest[0].label).toBe('Second strength');
    await t.database.client.exec(`update parameters_of_interest set label = 'Renamed strength' where key = 'mu_two'`);
    // the notice arrives at commit; the next read builds the model again
    await expect.poll(async () => (await analyst.get('/api/analyses/two-modes/model')).body.parametersOfInterest[0].label).toBe('Renamed strength');
    await t.database.client.exec(`update parameters_of_interest set label = 'Second strength' where key = 'mu_two'`);
  });

  it('refuses a model file whose parameter of interest names a template the model lacks or takes μ\u2019s key, naming the paths, and writes nothing', async () => {
    await emptyAnalysis('bad-pois');
    const before = await dbSnapshot(t);
    const doc = twoModes('bad-pois');
    doc.parametersOfInterest = [
      { key: 'mu', targets: [{ region: 'A', process: 'assoc' }] },
      { key: 'mu_c', targets: [{ region: 'C', process: 'assoc' }] },
    ];
    const res = await analyst.upload('/api/analyses/bad-pois/exchange', { name: 'bad.json', content: JSON.stringify(doc) });
    expect(res.status).toBe(422);
    expect(res.body.error.issues).toEqual(
      expect.arrayContaining([
        { path: ['parametersOfInterest', 0, 'key'], message: expect.stringMatching(/already μ/) },
        { path: ['parametersOfInterest', 1, 'targets', 0, 'region'], message: 'unknown region "C"' },
      ]),
    );
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('writes them in the import\u2019s transaction: when they cannot be stored, nothing of the model is left', async () => {
    await emptyAnalysis('half-saved');
    const before = await dbSnapshot(t);
    const { client } = t.database;
    await client.exec(`
      create function refuse_poi() returns trigger language plpgsql as $$ begin raise exception 'refused'; end $$;
      create trigger refuse_poi before insert on parameters_of_interest for each row execute function refuse_poi();`);
    try {
      const res = await analyst.upload('/api/analyses/half-saved/exchange', { name: 'two-modes.json', content: JSON.stringify(twoModes('half-saved')) });
      expect(res.status).toBe(500);
      expect(await dbSnapshot(t)).toBe(before);
    } finally {
      await client.exec('drop trigger refuse_poi on parameters_of_interest; drop function refuse_poi();');
    }
  });

  it('keeps the templates a parameter of interest multiplies: removing them, or giving one a floating normalisation, is refused by name', async () => {
    const base = '/api/analyses/two-modes';
    expect((await analyst.send('post', `${base}/floating-norms`, { key: 'k_bkg', label: 'Background', start: 1, min: 0, max: 5 })).status).toBe(201);
    const before = await dbSnapshot(t);
    const template = await analyst.send('delete', `${base}/templates/A/assoc`);
    expect(template.status).toBe(409);
    expect(template.body.error.message).toMatch(/parameter of interest "mu_two" multiplies the template of process "assoc" in region "A"/);
    const process = await analyst.send('delete', `${base}/processes/assoc`);
    expect(process.status).toBe(409);
    expect(process.body.error.message).toMatch(/"mu_two".*process "assoc"/);
    const region = await analyst.send('delete', `${base}/regions/B`);
    expect(region.status).toBe(409);
    expect(region.body.error.message).toMatch(/"mu_two".*region "B"/);
    const floated = await analyst.send('put', `${base}/templates/A/assoc`, { nominal: [8, 10, 9], floatingNorm: 'k_bkg' });
    expect(floated.status).toBe(422);
    expect(floated.body.error.issues).toEqual([{ path: ['floatingNorm'], message: expect.stringMatching(/"mu_two" already multiplies/) }]);
    expect(await dbSnapshot(t)).toBe(before);
    // a template no parameter of interest claims floats as before
    expect((await analyst.send('put', `${base}/templates/A/bkg`, { nominal: [70, 55, 38], floatingNorm: 'k_bkg' })).status).toBe(200);
  });

  describe('a fit’s contour', () => {
    const start = (slug: string, options: Record<string, unknown>) => analyst.send('post', `/api/analyses/${slug}/fits`, { version: 1, label: 'contour', options: { dataset: 'observed', impacts: 'none', ...options } });
    const fitCount = async (slug: string) => (await analyst.get(`/api/analyses/${slug}/fits`)).body.length as number;

    it('refuses a pair that names something other than a parameter of interest of the version, naming options.contour and the keys to choose from, and stores no fit', async () => {
      const before = await fitCount('two-modes');
      const unknown = await start('two-modes', { contour: ['mu', 'lumi'] });
      expect(unknown.status).toBe(400);
      expect(unknown.body.error.message).toMatch(/options\.contour names "lumi", which is not a parameter of interest of model version 1: name two of "mu", "mu_two"/);
      expect(unknown.body.error.issues).toEqual([{ path: ['options', 'contour', 1], message: expect.stringContaining('"lumi"') }]);
      const twice = await start('two-modes', { contour: ['mu_two', 'mu_two'] });
      expect(twice.status).toBe(400);
      expect(twice.body.error.issues).toEqual([{ path: ['options', 'contour', 1], message: expect.stringMatching(/options\.contour names "mu_two" twice/) }]);
      expect(await fitCount('two-modes')).toBe(before);
    });

    it('refuses a contour of a model whose only parameter of interest is μ', async () => {
      expect((await analyst.send('post', '/api/analyses/cascade-rate/versions', {})).status).toBe(201);
      const before = await fitCount('cascade-rate');
      const res = await start('cascade-rate', { contour: ['mu', 'k_continuum'] });
      expect(res.status).toBe(400);
      expect(res.body.error.issues).toEqual([{ path: ['options', 'contour'], message: expect.stringMatching(/options\.contour needs two parameters of interest, and model version 1 has only μ/) }]);
      expect(await fitCount('cascade-rate')).toBe(before);
    });

    it('refuses a contour on a fit of the control regions alone, on a fit that hides μ, and of a held parameter, saying what to change', async () => {
      const before = await fitCount('two-modes');
      const control = await start('two-modes', { controlOnly: true, contour: ['mu', 'mu_two'] });
      expect(control.status).toBe(400);
      expect(control.body.error.issues).toContainEqual({ path: ['options', 'contour'], message: expect.stringMatching(/options\.contour .*control regions alone holds μ.*set options\.contour to null/) });
      const hidden = await start('two-modes', { hiddenMu: true, contour: ['mu', 'mu_two'] });
      expect(hidden.status).toBe(400);
      expect(hidden.body.error.issues).toEqual([{ path: ['options', 'contour'], message: expect.stringMatching(/options\.contour .*hides μ.*set options\.contour to null/) }]);
      const held = await start('two-modes', { hold: [{ parameter: 'mu_two', value: 1 }], contour: ['mu', 'mu_two'] });
      expect(held.status).toBe(400);
      expect(held.body.error.issues).toEqual([{ path: ['options', 'contour'], message: expect.stringMatching(/options\.contour names "mu_two", held in this fit/) }]);
      expect(await fitCount('two-modes')).toBe(before);
      // the same fits without a contour start
      expect((await start('two-modes', { hiddenMu: true })).status).toBe(202);
      await t.fits.idle();
    });

    it('leaves the contour out of the checks a diagnosis runs, which may hold a parameter of interest', async () => {
      const checks = await analyst.send('post', `/api/analyses/two-modes/fits/${contourFit}/diagnosis/lumi/checks`, { checks: ['decorrelate', 'partner'] });
      expect(checks.status).toBe(202);
      expect(checks.body.length).toBe(2);
      for (const c of checks.body) expect(c.options.contour).toBeNull();
      await t.fits.idle();
    });
  });
});
