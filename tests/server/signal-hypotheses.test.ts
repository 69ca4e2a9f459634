import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import { analyses, entries, modelVersions } from '../../server/db/schema';
import { pruneModel } from '../../server/variations/pruning';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

/** The documented example: version 2, two hypotheses of the signal "sig" in region SR (2 bins). */
const example = (): ExchangeModelInput => JSON.parse(readFileSync('docs/exchange-file.md', 'utf8').split('```json')[1].split('```')[0]);
/** A templates CSV; the variance column only when the rows give it. */
const csv = (...rows: string[]) => [`region,process,bin,nominal${rows[0].split(',').length > 4 ? ',variance' : ''}`, ...rows].join('\n') + '\n';
const escale = (up: number[], down: number[]) => ({ systematic: 'escale', region: 'SR', process: 'sig', kind: 'shape', up, down });

describe('signal hypotheses in the exchange file', () => {
  let t: TestApp;
  let admin: Client;
  let analyst: Client;
  let made = 0;
  async function emptyAnalysis() {
    made += 1;
    const slug = `hypotheses-${made}`;
    expect((await admin.send('post', '/api/analyses', { slug, name: slug, blinded: false })).status).toBe(201);
    expect((await admin.send('post', `/api/analyses/${slug}/members`, { email: DEMO.analyst, role: 'analyst' })).status).toBe(201);
    return slug;
  }
  const importInto = async (slug: string, document: unknown) => analyst.upload(`/api/analyses/${slug}/exchange`, { name: 'model.json', content: JSON.stringify(document) });
  beforeAll(async () => {
    t = await createTestApp();
    admin = await signedIn(t.app, DEMO.admin);
    analyst = await signedIn(t.app, DEMO.analyst);
  });
  afterAll(async () => t.close());

  it('imports a version 1 file as a model without hypotheses, and exports it as version 2 without them', async () => {
    const slug = await emptyAnalysis();
    const { signalHypotheses: _none, ...v1 } = { ...example(), version: 1 as const, name: slug };
    const res = await importInto(slug, v1);
    expect(res.status).toBe(201);
    expect(res.body).toEqual({ regions: 2, processes: 2, entries: 3, parametersOfInterest: 0, hypotheses: 0 });
    const exported = (await analyst.get(`/api/analyses/${slug}/exchange`)).body;
    expect(exported.version).toBe(2);
    expect('signalHypotheses' in exported).toBe(false);
    expect(exported).toEqual(exchangeModelSchema.parse({ ...v1, version: 2 }));
    expect((await analyst.get(`/api/analyses/${slug}/signal-hypotheses`)).body).toEqual({ parameter: null, points: [], issues: [] });
  });

  it('imports a version 2 file with its hypotheses, lists them by value, and exports the same document', async () => {
    const slug = await emptyAnalysis();
    const document = { ...example(), name: slug };
    // written in the other order: the export gives them by value
    document.signalHypotheses!.points.reverse();
    const res = await importInto(slug, document);
    expect(res.status).toBe(201);
    expect(res.body).toEqual({ regions: 2, processes: 2, entries: 3, parametersOfInterest: 0, hypotheses: 2 });
    document.signalHypotheses!.points.reverse();
    expect((await analyst.get(`/api/analyses/${slug}/exchange`)).body).toEqual(exchangeModelSchema.parse(document));
    const listed = (await analyst.get(`/api/analyses/${slug}/signal-hypotheses`)).body;
    expect(listed.parameter).toEqual({ name: 'mass', unit: 'GeV' });
    expect(listed.issues).toEqual([]);
    expect(listed.points).toEqual([
      { key: 'm115', label: 'm = 115 GeV', value: 115, templates: [{ region: 'SR', process: 'sig', bins: 2, total: 10 }], total: 10, effects: { scale: 0, shape: 1 } },
      { key: 'm130', label: 'm = 130 GeV', value: 130, templates: [{ region: 'SR', process: 'sig', bins: 2, total: 9.5 }], total: 9.5, effects: { scale: 1, shape: 1 } },
    ]);
    const one = await analyst.get(`/api/analyses/${slug}/signal-hypotheses/m130`);
    expect(one.status).toBe(200);
    expect(one.body).toEqual(exchangeModelSchema.parse(document).signalHypotheses!.points[1]);
    expect((await analyst.get(`/api/analyses/${slug}/signal-hypotheses/m999`)).status).toBe(404);
    const { rows } = await t.database.client.query<{ summary: string }>(`select summary from revisions where action = 'model.imported' order by id desc limit 1`);
    expect(rows[0].summary).toMatch(/3 register entries, 2 signal hypotheses\.$/);
  });

  it('freezes the hypotheses into a model version', async () => {
    const slug = await emptyAnalysis();
    expect((await importInto(slug, { ...example(), name: slug })).status).toBe(201);
    const frozen = await analyst.send('post', `/api/analyses/${slug}/versions`, { note: 'with hypotheses' });
    expect(frozen.status).toBe(201);
    const [a] = await t.database.db.select().from(analyses).where(eq(analyses.slug, slug));
    const [v] = await t.database.db.select().from(modelVersions).where(and(eq(modelVersions.analysisId, a.id), eq(modelVersions.number, frozen.body.number)));
    const model = v.model as ExchangeModel;
    expect(model.version).toBe(2);
    expect(model.signalHypotheses!.points.map((p) => p.key)).toEqual(['m115', 'm130']);
    expect(exchangeModelSchema.safeParse(model).success).toBe(true);
  });

  type Bad = { name: string; change: (m: ExchangeModelInput) => void; path: (string | number)[]; message: RegExp };
  const point = (m: ExchangeModelInput, i: number) => m.signalHypotheses!.points[i];
  const BAD: Bad[] = [
    { name: 'an unknown region', change: (m) => (point(m, 1).templates[0].region = 'XR'), path: ['signalHypotheses', 'points', 1, 'templates', 0, 'region'], message: /unknown region "XR"/ },
    { name: 'an unknown process', change: (m) => (point(m, 1).templates[0].process = 'nope'), path: ['signalHypotheses', 'points', 1, 'templates', 0, 'process'], message: /unknown process "nope"/ },
    { name: 'a background process', change: (m) => (point(m, 1).templates[0].process = 'bkg'), path: ['signalHypotheses', 'points', 1, 'templates', 0, 'process'], message: /"bkg" is not a signal process/ },
    { name: 'a wrong bin count', change: (m) => (point(m, 1).templates[0].nominal = [1, 2, 3]), path: ['signalHypotheses', 'points', 1, 'templates', 0, 'nominal'], message: /has 3 values but region "SR" has 2 bins/ },
    { name: 'a duplicate key', change: (m) => (point(m, 1).key = 'm115'), path: ['signalHypotheses', 'points', 1, 'key'], message: /duplicate key "m115"/ },
    { name: 'a duplicate value', change: (m) => (point(m, 1).value = 115), path: ['signalHypotheses', 'points', 1, 'value'], message: /a second hypothesis with mass = 115/ },
    { name: 'a missing shape effect', change: (m) => (point(m, 1).effects = point(m, 1).effects!.filter((e) => e.kind !== 'shape')), path: ['signalHypotheses', 'points', 1, 'effects'], message: /systematic "escale" varies by shape: give that shape effect/ },
    { name: 'an effect of an unknown systematic', change: (m) => (point(m, 1).effects![1].systematic = 'nowhere'), path: ['signalHypotheses', 'points', 1, 'effects', 1, 'systematic'], message: /unknown systematic "nowhere"/ },
    { name: 'hypotheses in a version 1 file', change: (m) => (m.version = 1), path: ['signalHypotheses'], message: /need exchange file version 2/ },
  ];
  for (const bad of BAD)
    it(`refuses a file whose hypothesis has ${bad.name}, naming the field, and saves nothing`, async () => {
      const slug = await emptyAnalysis();
      const document = { ...example(), name: slug };
      bad.change(document);
      const before = await dbSnapshot(t);
      const res = await importInto(slug, document);
      expect(res.status).toBe(422);
      expect(res.body.error.issues).toContainEqual({ path: bad.path, message: expect.stringMatching(bad.message) });
      expect(await dbSnapshot(t)).toBe(before);
    });

  it('writes the hypotheses in the same transaction as the model: when they cannot be written, nothing is left', async () => {
    const slug = await emptyAnalysis();
    const before = await dbSnapshot(t);
    await t.database.client.exec(`
      create function refuse_hypothesis() returns trigger language plpgsql as $$ begin raise exception 'refused'; end $$;
      create trigger refuse_hypothesis before insert on signal_hypotheses for each row when (new.key = 'm130') execute function refuse_hypothesis();`);
    try {
      expect((await importInto(slug, { ...example(), name: slug })).status).toBe(500);
      expect(await dbSnapshot(t)).toBe(before);
    } finally {
      await t.database.client.exec('drop trigger refuse_hypothesis on signal_hypotheses; drop function refuse_hypothesis();');
    }
  });

  it('leaves a retired entry out of the hypotheses\u2019 effects as out of the model\u2019s', async () => {
    const slug = await emptyAnalysis();
    expect((await importInto(slug, { ...example(), name: slug })).status).toBe(201);
    const [a] = await t.database.db.select().from(analyses).where(eq(analyses.slug, slug));
    await t.database.db.update(entries).set({ state: 'retired' }).where(and(eq(entries.analysisId, a.id), eq(entries.key, 'accept')));
    const exported = (await analyst.get(`/api/analyses/${slug}/exchange`)).body as ExchangeModel;
    expect(exported.systematics.map((s) => s.key)).toEqual(['lumi', 'escale']);
    expect(exported.signalHypotheses!.points[1].effects.map((e) => e.systematic)).toEqual(['escale']);
    expect(exchangeModelSchema.safeParse(exported).success).toBe(true);
  });
});

describe('pruning the effects of signal hypotheses', () => {
  const model = () => exchangeModelSchema.parse(example());
  it('leaves out a hypothesis\u2019s effect of the same systematic, template and kind as a dropped one', () => {
    const pruned = pruneModel(model(), [{ systematic: 'accept', region: 'SR', process: 'sig', kind: 'scale', as: 'dropped' }]);
    // the systematic stays: the first hypothesis has no effect of it, the second had one, now gone
    expect(pruned.systematics.map((s) => s.key)).toEqual(['lumi', 'escale']);
    expect(pruned.signalHypotheses!.points.map((p) => p.effects.map((e) => `${e.systematic}/${e.kind}`))).toEqual([['escale/shape'], ['escale/shape']]);
    expect(exchangeModelSchema.safeParse(pruned).success).toBe(true);
  });

  it('keeps a pruned shape\u2019s normalisation over each hypothesis\u2019s own template, times its own or the model\u2019s ratios of that systematic', () => {
    const pruned = pruneModel(model(), [{ systematic: 'escale', region: 'SR', process: 'sig', kind: 'shape', as: 'normalisation' }]);
    const [first, second] = pruned.signalHypotheses!.points;
    // m115: Σup/Σnominal = 10.3/10, Σdown/Σnominal = 9.7/10; no scale effect of escale anywhere on SR/sig
    expect(first.effects).toEqual([{ systematic: 'escale', region: 'SR', process: 'sig', kind: 'scale', up: expect.closeTo(1.03, 12), down: expect.closeTo(0.97, 12) }]);
    // m130: 9.8/9.5 and 9.3/9.5
    expect(second.effects).toContainEqual({ systematic: 'escale', region: 'SR', process: 'sig', kind: 'scale', up: expect.closeTo(9.8 / 9.5, 12), down: expect.closeTo(9.3 / 9.5, 12) });
    expect(exchangeModelSchema.safeParse(pruned).success).toBe(true);
  });
});

describe('the live model\u2019s signal hypotheses through the API', () => {
  let t: TestApp;
  let admin: Client;
  let analyst: Client;
  let reader: Client;
  const S = '/api/analyses/hypothesis-edits';
  /** Two signal regions (2 bins and 1 bin), a signal and a background, no systematics. */
  const model = {
    format: 'plumbline.model',
    version: 2,
    name: 'Hypothesis edits',
    regions: [
      { key: 'SR', role: 'signal', observable: { name: 'm', unit: 'GeV' }, edges: [100, 120, 140] },
      { key: 'SR2', role: 'signal', observable: { name: 'm', unit: 'GeV' }, edges: [100, 140] },
    ],
    processes: [
      { key: 'sig', kind: 'signal' },
      { key: 'bkg', kind: 'background' },
    ],
    templates: [
      { region: 'SR', process: 'sig', nominal: [6, 4] },
      { region: 'SR2', process: 'sig', nominal: [3] },
      { region: 'SR', process: 'bkg', nominal: [50, 40] },
      { region: 'SR2', process: 'bkg', nominal: [30] },
    ],
  };
  const fields = (key: string, value: string, extra: Record<string, string> = {}) => ({ key, value, label: `m = ${value} GeV`, ...extra });
  const upload = (query: string, content: string, f: Record<string, string>, who = analyst) => who.upload(`${S}/signal-hypotheses${query}`, { name: 'hypothesis.csv', content }, f);
  const GOOD = csv('SR,sig,1,2,0.1', 'SR,sig,2,7,0.3', 'SR2,sig,1,4,0.2');

  beforeAll(async () => {
    t = await createTestApp();
    admin = await signedIn(t.app, DEMO.admin);
    analyst = await signedIn(t.app, DEMO.analyst);
    reader = await signedIn(t.app, DEMO.reader);
    expect((await admin.send('post', '/api/analyses', { slug: 'hypothesis-edits', name: 'Hypothesis edits', blinded: false })).status).toBe(201);
    expect((await admin.send('post', `${S}/members`, { email: DEMO.analyst, role: 'analyst' })).status).toBe(201);
    expect((await admin.send('post', `${S}/members`, { email: DEMO.reader, role: 'reader' })).status).toBe(201);
    expect((await analyst.upload(`${S}/exchange`, { name: 'model.json', content: JSON.stringify(model) })).status).toBe(201);
  });
  afterAll(async () => t.close());

  it('asks for the parameter before the first hypothesis, naming the field', async () => {
    const before = await dbSnapshot(t);
    const res = await upload('?save=1', GOOD, fields('m130', '130'));
    expect(res.status).toBe(422);
    expect(res.body.error.issues).toEqual([{ path: ['parameter'], message: 'is not set' }]);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('sets the parameter, refusing an empty name', async () => {
    const empty = await analyst.send('put', `${S}/hypothesis-parameter`, { name: ' ', unit: 'GeV' });
    expect(empty.status).toBe(400);
    expect(empty.body.error.issues).toEqual([{ path: ['name'], message: 'is required (e.g. mass)' }]);
    const res = await analyst.send('put', `${S}/hypothesis-parameter`, { name: 'mass', unit: 'GeV' });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ name: 'mass', unit: 'GeV' });
    expect((await reader.get(`${S}/signal-hypotheses`)).body.parameter).toEqual({ name: 'mass', unit: 'GeV' });
    expect((await reader.send('put', `${S}/hypothesis-parameter`, { name: 'width', unit: 'GeV' })).status).toBe(403);
  });

  it('previews a hypothesis from its CSV without saving anything, then saves it with its file and a revision', async () => {
    const before = await dbSnapshot(t);
    const preview = await upload('', GOOD, fields('m130', '130'));
    expect(preview.status).toBe(200);
    expect(preview.body).toEqual({
      saved: false,
      replaced: false,
      hypothesis: {
        key: 'm130',
        label: 'm = 130 GeV',
        value: 130,
        templates: [
          { region: 'SR', process: 'sig', bins: 2, total: 9 },
          { region: 'SR2', process: 'sig', bins: 1, total: 4 },
        ],
        total: 13,
        effects: { scale: 0, shape: 0 },
      },
    });
    expect(await dbSnapshot(t)).toBe(before);

    const saved = await upload('?save=1', GOOD, fields('m130', '130'));
    expect(saved.status).toBe(201);
    expect(saved.body).toMatchObject({ saved: true, replaced: false, hypothesis: { key: 'm130', total: 13 } });
    expect((await analyst.get(`${S}/signal-hypotheses/m130`)).body).toEqual({
      key: 'm130',
      label: 'm = 130 GeV',
      value: 130,
      templates: [
        { region: 'SR', process: 'sig', nominal: [2, 7], variance: [0.1, 0.3] },
        { region: 'SR2', process: 'sig', nominal: [4], variance: [0.2] },
      ],
      effects: [],
    });
    const { rows } = await t.database.client.query<{ action: string; summary: string }>(`select action, summary from revisions where entry_id is null order by id desc limit 1`);
    expect(rows[0]).toEqual({ action: 'hypothesis.saved', summary: expect.stringMatching(/^Added the signal hypothesis "m130" \(mass = 130 GeV\) from "hypothesis\.csv" \(SHA-256 [0-9a-f]{12}…\): 2 templates, 0 effects\.$/) });
    const stored = await t.database.client.query<{ n: number }>(`select count(*)::int as n from uploads where filename = 'hypothesis.csv' and entry_id is null`);
    expect(stored.rows[0].n).toBe(1);
  });

  it('lists the hypotheses by value and exports them; a second upload of a key replaces it', async () => {
    expect((await upload('?save=1', csv('SR,sig,1,5', 'SR,sig,2,3'), fields('m110', '110'))).status).toBe(201);
    const listed = (await reader.get(`${S}/signal-hypotheses`)).body;
    expect(listed.points.map((p: { key: string; value: number; total: number }) => [p.key, p.value, p.total])).toEqual([
      ['m110', 110, 8],
      ['m130', 130, 13],
    ]);
    const replaced = await upload('?save=1', csv('SR,sig,1,5.5', 'SR,sig,2,3'), fields('m110', '112'));
    expect(replaced.status).toBe(201);
    expect(replaced.body).toMatchObject({ saved: true, replaced: true, hypothesis: { key: 'm110', value: 112, total: 8.5 } });
    const exported = (await analyst.get(`${S}/exchange`)).body as ExchangeModel;
    expect(exported.signalHypotheses).toEqual({
      parameter: { name: 'mass', unit: 'GeV' },
      points: [
        { key: 'm110', label: 'm = 112 GeV', value: 112, templates: [{ region: 'SR', process: 'sig', nominal: [5.5, 3] }], effects: [] },
        { key: 'm130', label: 'm = 130 GeV', value: 130, templates: (await analyst.get(`${S}/signal-hypotheses/m130`)).body.templates, effects: [] },
      ],
    });
    expect(exchangeModelSchema.safeParse(exported).success).toBe(true);
  });

  type Refusal = { name: string; content?: string; fields: Record<string, string>; status: number; path: (string | number)[]; message: RegExp };
  const REFUSALS: Refusal[] = [
    { name: 'no key', fields: { value: '120' }, status: 400, path: ['key'], message: /./ },
    { name: 'a value that is no number', fields: fields('m120', '120 GeV'), status: 400, path: ['value'], message: /must be a number, e\.g\. 1250/ },
    { name: 'an unknown field', fields: fields('m120', '120', { colour: 'red' }), status: 400, path: [], message: /colour/ },
    { name: 'an unknown region', content: csv('SR,sig,1,1', 'SR,sig,2,1', 'XR,sig,1,1'), fields: fields('m120', '120'), status: 422, path: ['row', 4, 'region'], message: /Row 4, column "region": no region "XR" in this analysis/ },
    { name: 'an unknown process', content: csv('SR,nope,1,1', 'SR,nope,2,1'), fields: fields('m120', '120'), status: 422, path: ['row', 2, 'process'], message: /no process "nope"/ },
    { name: 'a background process', content: csv('SR,bkg,1,1', 'SR,bkg,2,1'), fields: fields('m120', '120'), status: 422, path: ['file'], message: /"hypothesis\.csv": process "bkg" is not a signal process: a hypothesis replaces signal templates only/ },
    { name: 'a wrong bin count', content: csv('SR,sig,1,1'), fields: fields('m120', '120'), status: 422, path: [], message: /region "SR" has 2 bins but the file gives 1 for process "sig"/ },
    { name: 'a value another hypothesis has', fields: fields('m131', '130'), status: 422, path: ['value'], message: /a second hypothesis with mass = 130 \("m130"\): give another value, or replace "m130" under its key/ },
    { name: 'effects that are not JSON', fields: fields('m120', '120', { effects: '[{"systematic": ' }), status: 422, path: ['effects'], message: /is not valid JSON/ },
    { name: 'an effect of the wrong shape', fields: fields('m120', '120', { effects: JSON.stringify([{ systematic: 'x', region: 'SR', process: 'sig', kind: 'scale', up: -1, down: 0.9 }]) }), status: 422, path: ['effects', 0, 'up'], message: /must be greater than 0/ },
    { name: 'an effect of an unknown systematic', fields: fields('m120', '120', { effects: JSON.stringify([escale([2, 7], [2, 7])]) }), status: 422, path: ['effects', 0, 'systematic'], message: /unknown systematic "escale"/ },
  ];
  for (const r of REFUSALS)
    it(`refuses a hypothesis with ${r.name} (${r.status}), naming the field, and saves nothing`, async () => {
      const before = await dbSnapshot(t);
      const res = await upload('?save=1', r.content ?? GOOD, r.fields);
      expect(res.status).toBe(r.status);
      expect(res.body.error.message).toMatch(r.status === 422 ? /^Nothing was saved/ : /^The request is not valid/);
      expect(res.body.error.issues).toContainEqual({ path: r.path, message: expect.stringMatching(r.message) });
      expect(await dbSnapshot(t)).toBe(before);
    });

  it('refuses a file that is not there or not text', async () => {
    const before = await dbSnapshot(t);
    expect((await analyst.send('post', `${S}/signal-hypotheses?save=1`, fields('m120', '120'))).status).toBe(400);
    expect((await upload('?save=1', '\u0000\u0001', fields('m120', '120'))).status).toBe(422);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('refuses to remove or rebin what a hypothesis replaces, naming the hypotheses, and allows it once they are gone', async () => {
    const before = await dbSnapshot(t);
    const refusals = [
      [await analyst.send('delete', `${S}/templates/SR2/sig`), /The signal hypothesis "m130" replaces the template of process "sig" in region "SR2"\. Remove those hypotheses, or replace them without this template, first\./],
      [await analyst.send('delete', `${S}/regions/SR2`), /hypothesis "m130" replaces templates of region "SR2"/],
      [await analyst.send('patch', `${S}/regions/SR2`, { edges: [100, 120, 140] }), /"m130" replaces templates of region "SR2" with its 1 bins\. Change the edges without changing the bin count/],
      [await analyst.send('delete', `${S}/processes/sig`), /2 signal hypotheses "m110" and "m130" replace templates of process "sig"/],
      [await analyst.send('patch', `${S}/processes/sig`, { kind: 'background' }), /replace templates of the signal process "sig"\. A hypothesis replaces signal templates only/],
    ] as const;
    for (const [res, message] of refusals) {
      expect(res.status).toBe(409);
      expect(res.body.error.message).toMatch(message);
    }
    expect(await dbSnapshot(t)).toBe(before);
    // a change that leaves the hypotheses whole is allowed
    expect((await analyst.send('patch', `${S}/regions/SR2`, { edges: [100, 150] })).status).toBe(200);

    expect((await reader.send('delete', `${S}/signal-hypotheses/m130`)).status).toBe(403);
    expect((await analyst.send('delete', `${S}/signal-hypotheses/m130`)).status).toBe(204);
    expect((await analyst.send('delete', `${S}/signal-hypotheses/m130`)).status).toBe(404);
    expect((await analyst.get(`${S}/signal-hypotheses`)).body.points.map((p: { key: string }) => p.key)).toEqual(['m110']);
    expect((await analyst.send('delete', `${S}/templates/SR2/sig`)).status).toBe(204);
  });

  it('lists a shape effect added since on a replaced template as missing, and refuses to freeze until the hypothesis gives it', async () => {
    expect((await analyst.send('post', `${S}/entries`, { key: 'escale', label: 'Energy scale' })).status).toBe(201);
    const variation = ['region,process,kind,bin,up,down', 'SR,sig,shape,1,6.2,5.8', 'SR,sig,shape,2,4.1,3.9'].join('\n') + '\n';
    expect((await analyst.upload(`${S}/entries/escale/variations?save=1`, { name: 'escale.csv', content: variation })).status).toBe(201);
    const listed = (await analyst.get(`${S}/signal-hypotheses`)).body;
    expect(listed.issues).toEqual([{ hypothesis: 'm110', message: expect.stringMatching(/systematic "escale" varies by shape: give that shape effect for this hypothesis too/) }]);
    const frozen = await analyst.send('post', `${S}/versions`, { note: 'too early' });
    expect(frozen.status).toBe(422);
    expect(frozen.body.error.message).toMatch(/The signal hypotheses no longer fit the model, so it cannot be frozen\. .*"m110" replaces the template of region "SR", process "sig", which systematic "escale" varies by shape/);

    // given with the hypothesis, the effect is taken (the hypothesis is replaced), and the version freezes
    const effects = JSON.stringify([escale([5.7, 3.1], [5.3, 2.9])]);
    const res = await upload('?save=1', csv('SR,sig,1,5.5', 'SR,sig,2,3'), fields('m110', '112', { effects }));
    expect(res.status).toBe(201);
    expect(res.body.hypothesis.effects).toEqual({ scale: 0, shape: 1 });
    expect((await analyst.get(`${S}/signal-hypotheses`)).body.issues).toEqual([]);
    expect((await analyst.send('post', `${S}/versions`, { note: 'with the shape' })).status).toBe(201);
  });

  it('refuses a hypothesis without a shape effect the model gives its template, naming "effects"', async () => {
    const before = await dbSnapshot(t);
    const res = await upload('?save=1', csv('SR,sig,1,1', 'SR,sig,2,8'), fields('m135', '135'));
    expect(res.status).toBe(422);
    expect(res.body.error.issues).toEqual([{ path: ['effects'], message: expect.stringMatching(/which systematic "escale" varies by shape/) }]);
    const wrongLength = await upload('?save=1', csv('SR,sig,1,1', 'SR,sig,2,8'), fields('m135', '135', { effects: JSON.stringify([escale([1.1, 8.2, 3], [0.9, 7.8])]) }));
    expect(wrongLength.status).toBe(422);
    expect(wrongLength.body.error.issues).toContainEqual({ path: ['effects', 0, 'up'], message: 'has 3 values but region "SR" has 2 bins' });
    expect(await dbSnapshot(t)).toBe(before);
  });
});
