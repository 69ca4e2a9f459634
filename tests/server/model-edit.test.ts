import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const A = '/api/analyses/vireon-search';

describe('the model editor', () => {
  let t: TestApp;
  let analyst: Client;
  beforeAll(async () => {
    t = await createTestApp();
    analyst = await signedIn(t.app, DEMO.analyst);
  });
  afterAll(async () => t.close());

  it('adds a region, a process and a template, and records each change as a revision of the model', async () => {
    expect((await analyst.send('post', `${A}/regions`, { key: 'CR-high', role: 'control', observable: 'm(flare pair)', unit: 'GeV', edges: [1600, 1800, 2000] })).status).toBe(201);
    expect((await analyst.send('post', `${A}/processes`, { key: 'cosmic', label: 'Cosmic flares', kind: 'background', colour: '#445566' })).status).toBe(201);
    const template = await analyst.send('put', `${A}/templates/CR-high/cosmic`, { nominal: [4, 2], variance: [0.4, 0.2], floatingNorm: 'k_continuum' });
    expect(template.status).toBe(200);
    const model = (await analyst.get(`${A}/model`)).body;
    expect(model.templates.find((x: { region: string; process: string }) => x.region === 'CR-high' && x.process === 'cosmic')).toEqual({ region: 'CR-high', process: 'cosmic', nominal: [4, 2], variance: [0.4, 0.2], floatingNorm: 'k_continuum' });
    const { rows } = await t.database.client.query<{ action: string }>(`select action from revisions where entry_id is null order by id desc limit 3`);
    expect(rows.map((r) => r.action)).toEqual(['template.saved', 'process.created', 'region.created']);
  });

  it('refuses edges that do not increase, and a bin-count change while templates exist', async () => {
    const before = await dbSnapshot(t);
    const bad = await analyst.send('post', `${A}/regions`, { key: 'CR-bad', role: 'control', observable: 'm', edges: [0, 2, 1] });
    expect(bad.status).toBe(422);
    expect(bad.body.error.issues[0]).toEqual({ path: ['edges', 2], message: 'edge 3 (1) is not above edge 2 (2)' });
    const rebin = await analyst.send('patch', `${A}/regions/CR-high`, { edges: [1600, 1700, 1800, 2000] });
    expect(rebin.status).toBe(409);
    expect(rebin.body.error.message).toMatch(/1 template with 2 bins/);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('keeps a label and unit that a patch leaves out', async () => {
    const res = await analyst.send('patch', `${A}/regions/CR-high`, { edges: [1600, 1750, 2000] });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ unit: 'GeV', observable: 'm(flare pair)', edges: [1600, 1750, 2000] });
  });

  it('refuses a template of the wrong length, and removing a region or template that register effects vary', async () => {
    const before = await dbSnapshot(t);
    const short = await analyst.send('put', `${A}/templates/CR-high/cosmic`, { nominal: [1] });
    expect(short.status).toBe(422);
    expect(short.body.error.issues).toEqual([{ path: ['nominal'], message: 'has 1 values but region "CR-high" has 2 bins' }]);
    const region = await analyst.send('delete', `${A}/regions/CR-low`);
    expect(region.status).toBe(409);
    expect(region.body.error.message).toMatch(/register effects vary templates of region "CR-low"/);
    const template = await analyst.send('delete', `${A}/templates/CR-low/continuum`);
    expect(template.status).toBe(409);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('records observed data for a blinded signal region without sending it back', async () => {
    const bins = (await analyst.get(`${A}/model`)).body.regions.find((r: { key: string }) => r.key === 'SR-wide').edges.length - 1;
    const res = await analyst.send('put', `${A}/regions/SR-wide/observed`, { observed: Array.from({ length: bins }, (_, i) => 1000 + i) });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ observed: null, withheld: true });
    expect(JSON.stringify(res.body)).not.toContain('1003');
  });

  it('previews and then saves a templates CSV, and refuses a bad one whole', async () => {
    const content = readFileSync('docs/examples/templates.csv', 'utf8');
    const before = await dbSnapshot(t);
    const preview = await analyst.upload(`${A}/model/csv?kind=templates`, { name: 'templates.csv', content });
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ saved: false, kind: 'templates', changes: [{ region: 'CR-shower', process: 'continuum', bins: 8 }] });
    expect(await dbSnapshot(t)).toBe(before);
    const saved = await analyst.upload(`${A}/model/csv?kind=templates&save=1`, { name: 'templates.csv', content });
    expect(saved.status).toBe(201);
    const model = (await analyst.get(`${A}/model`)).body;
    expect(model.templates.find((x: { region: string; process: string }) => x.region === 'CR-shower' && x.process === 'continuum').variance).toEqual(content.trim().split('\n').slice(1).map((l) => Number(l.split(',')[4])));

    const after = await dbSnapshot(t);
    const bad = await analyst.upload(`${A}/model/csv?kind=templates&save=1`, { name: 'bad.csv', content: 'region,process,bin,nominal\nCR-shower,continuum,1,-5\n' });
    expect(bad.status).toBe(422);
    expect(bad.body.error.message).toMatch(/Row 2, column "nominal": -5 must not be negative/);
    expect(await dbSnapshot(t)).toBe(after);
  });

  it('saves an observed-data CSV', async () => {
    const content = readFileSync('docs/examples/observed.csv', 'utf8');
    const res = await analyst.upload(`${A}/model/csv?kind=observed&save=1`, { name: 'observed.csv', content });
    expect(res.status).toBe(201);
    const region = (await analyst.get(`${A}/model`)).body.regions.find((r: { key: string }) => r.key === 'CR-shower');
    expect(region.observed).toEqual(content.trim().split('\n').slice(1).map((l) => Number(l.split(',')[2])));
  });

  it('refuses model edits by a systematics contact', async () => {
    const contact = await signedIn(t.app, DEMO.contact);
    expect((await contact.send('put', `${A}/templates/CR-high/cosmic`, { nominal: [1, 1] })).status).toBe(403);
  });
});
