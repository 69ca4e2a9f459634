import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { demoScenario } from '../../server/seed/scenario';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

describe('the exchange file through the API', () => {
  let t: TestApp;
  let admin: Client;
  let analyst: Client;
  async function emptyAnalysis(slug: string, blinded: boolean) {
    expect((await admin.send('post', '/api/analyses', { slug, name: slug, blinded })).status).toBe(201);
    expect((await admin.send('post', `/api/analyses/${slug}/members`, { email: DEMO.analyst, role: 'analyst' })).status).toBe(201);
  }
  beforeAll(async () => {
    t = await createTestApp({ UPLOAD_LIMIT_BYTES: 10_000_000 });
    admin = await signedIn(t.app, DEMO.admin);
    analyst = await signedIn(t.app, DEMO.analyst);
  });
  afterAll(async () => t.close());

  it('gives back the same model when an imported model is exported', async () => {
    await emptyAnalysis('round-trip', false);
    const original = demoScenario().analyses.find((a) => a.slug === 'vireon-search')!.model;
    const imported = await analyst.upload('/api/analyses/round-trip/exchange', { name: 'vireon.json', content: JSON.stringify({ ...original, name: 'round-trip' }) });
    expect(imported.status).toBe(201);
    expect(imported.body).toEqual({ regions: 5, processes: 6, entries: 40, parametersOfInterest: 0, hypotheses: 30 });
    const exported = await analyst.get('/api/analyses/round-trip/exchange');
    expect(exported.headers['content-disposition']).toMatch(/round-trip\.model\.json/);
    expect(exported.body).toEqual(exchangeModelSchema.parse({ ...original, name: 'round-trip' }));
  });

  it('round-trips the documented example too', async () => {
    await emptyAnalysis('doc-example', false);
    const doc = readFileSync('docs/exchange-file.md', 'utf8');
    const example = JSON.parse(doc.split('```json')[1].split('```')[0]);
    expect((await analyst.upload('/api/analyses/doc-example/exchange', { name: 'example.json', content: JSON.stringify({ ...example, name: 'doc-example' }) })).status).toBe(201);
    expect((await analyst.get('/api/analyses/doc-example/exchange')).body).toEqual(exchangeModelSchema.parse({ ...example, name: 'doc-example' }));
  });

  it('leaves the signal regions\u2019 data out of the export of a blinded analysis, and keeps the control regions\u2019', async () => {
    const exported = (await analyst.get('/api/analyses/vireon-search/exchange')).body;
    for (const r of exported.regions) expect('observed' in r).toBe(r.role !== 'signal');
  });

  it('refuses a model that does not pass the schema, naming the paths, and writes nothing', async () => {
    await emptyAnalysis('bad-import', true);
    const before = await dbSnapshot(t);
    const bad = { format: 'plumbline.model', version: 1, name: 'bad', regions: [{ key: 'R', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1, 2], observed: [1, -2] }], processes: [{ key: 'p', kind: 'background' }], templates: [{ region: 'R', process: 'p', nominal: [1] }] };
    const res = await analyst.upload('/api/analyses/bad-import/exchange', { name: 'bad.json', content: JSON.stringify(bad) });
    expect(res.status).toBe(422);
    // every problem at once: a field's own rule and the cross-field bin count
    expect(res.body.error.issues).toEqual([
      { path: ['regions', 0, 'observed', 1], message: 'must not be negative' },
      { path: ['templates', 0, 'nominal'], message: 'has 1 values but region "R" has 2 bins' },
    ]);
    const notJson = await analyst.upload('/api/analyses/bad-import/exchange', { name: 'bad.json', content: '{"format":' });
    expect(notJson.status).toBe(422);
    expect(notJson.body.error.message).toMatch(/not valid JSON/);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('writes the model and the revision naming its file in one transaction: when the revision cannot be written, no model is left', async () => {
    await emptyAnalysis('no-revision', false);
    const before = await dbSnapshot(t);
    const { client } = t.database;
    await client.exec(`
      create function refuse_model_imported() returns trigger language plpgsql as $$ begin raise exception 'refused'; end $$;
      create trigger refuse_model_imported before insert on revisions for each row when (new.action = 'model.imported') execute function refuse_model_imported();`);
    try {
      const original = demoScenario().analyses[1].model;
      const res = await analyst.upload('/api/analyses/no-revision/exchange', { name: 'cascade.json', content: JSON.stringify({ ...original, name: 'no-revision' }) });
      expect(res.status).toBe(500);
      expect(await dbSnapshot(t)).toBe(before);
    } finally {
      await client.exec('drop trigger refuse_model_imported on revisions; drop function refuse_model_imported();');
    }
  });

  it('refuses to import into an analysis that already has a model', async () => {
    const before = await dbSnapshot(t);
    const original = demoScenario().analyses[1].model;
    const res = await analyst.upload('/api/analyses/cascade-rate/exchange', { name: 'again.json', content: JSON.stringify(original) });
    expect(res.status).toBe(409);
    expect(await dbSnapshot(t)).toBe(before);
  });
});
