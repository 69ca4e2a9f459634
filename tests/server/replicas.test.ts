import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const A = '/api/analyses/vireon-search';
const ENTRY = `${A}/entries/flare_id`;
const HEADER = 'region,process,template,bin,yield';

describe('one systematic from alternative templates', () => {
  let t: TestApp;
  let contact: Client;
  let nominal: number[];
  /** alternative templates of CR-shower/continuum, each the nominal times a factor per bin */
  const file = (factors: number[][], name = 'alternatives.csv') => ({
    name,
    content: [HEADER, ...factors.flatMap((f, k) => nominal.map((n, b) => `CR-shower,continuum,alt${k + 1},${b + 1},${n * f[b]}`))].join('\n') + '\n',
  });
  beforeAll(async () => {
    t = await createTestApp();
    contact = await signedIn(t.app, DEMO.contact);
    nominal = (await contact.get(`${A}/model`)).body.templates.find((x: { region: string; process: string }) => x.region === 'CR-shower' && x.process === 'continuum').nominal;
  });
  afterAll(async () => t.close());

  const upload = (f: { name: string; content: string }, options: object, save = false) => contact.upload(`${ENTRY}/replicas${save ? '?save=1' : ''}`, f, { options: JSON.stringify(options) });

  it('previews the per-bin envelope of the alternatives and the nominal (hand-computed)', async () => {
    const res = await upload(file([Array(8).fill(1.05), Array(8).fill(0.97), [1.02, 0.9, 1, 1, 1, 1, 1, 1.1]]), { method: 'envelope' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ saved: false, method: 'envelope', region: 'CR-shower', process: 'continuum', templates: ['alt1', 'alt2', 'alt3'] });
    const [effect] = res.body.effects;
    const up = [1.05, 1.05, 1.05, 1.05, 1.05, 1.05, 1.05, 1.1];
    const down = [0.97, 0.9, 0.97, 0.97, 0.97, 0.97, 0.97, 0.97];
    effect.up.forEach((v: number, b: number) => expect(v).toBeCloseTo(nominal[b] * up[b], 9));
    effect.down.forEach((v: number, b: number) => expect(v).toBeCloseTo(nominal[b] * down[b], 9));
  });

  it('previews nominal ± the standard deviation of replicas (hand-computed)', async () => {
    // two replicas at ×1.02 and ×0.98: mean 1, sd √((0.02² + 0.02²)/1) = 0.02√2 of the nominal
    const res = await upload(file([Array(8).fill(1.02), Array(8).fill(0.98)]), { method: 'spread' });
    expect(res.status).toBe(200);
    res.body.effects[0].up.forEach((v: number, b: number) => expect(v).toBeCloseTo(nominal[b] * (1 + 0.02 * Math.SQRT2), 9));
  });

  it('saves principal components as the entry\u2019s effect and entries of their own, with the file kept', async () => {
    // replicas along two directions: a tilt (strong) and a wiggle (weaker)
    const replicas = Array.from({ length: 12 }, (_, k) => {
      const a = ((k % 6) - 2.5) * 0.02;
      const w = (k < 6 ? 1 : -1) * 0.005;
      return Array.from({ length: 8 }, (_, b) => 1 + a * (b - 3.5) / 3.5 + w * (b % 2 ? 1 : -1));
    });
    const res = await upload(file(replicas, 'replicas.csv'), { method: 'components', keep: 0.999 }, true);
    expect(res.status).toBe(201);
    expect(res.body.effects.map((e: { entry: string; created: boolean }) => [e.entry, e.created])).toEqual([
      ['flare_id', false],
      ['flare_id_pc2', true],
    ]);
    expect(res.body.kept).toBeGreaterThan(0.999);
    const second = (await contact.get(`${A}/entries/flare_id_pc2`)).body;
    expect(second).toMatchObject({ state: 'draft', owner: { email: DEMO.contact }, group: 'identification' });
    expect(second.revisions[0].summary).toMatch(/^Created from the principal components of 12 templates of region "CR-shower", process "continuum" in "replicas.csv".*Component 2: \d+\.\d % of the variance\./);
    expect(second.effects[0].upload.filename).toBe('replicas.csv');
  });

  it('refuses mismatched bins, a single template and a negative yield, naming row and column, and saves nothing', async () => {
    const before = await dbSnapshot(t);
    const short = file([Array(8).fill(1.05), Array(8).fill(0.97)]);
    short.content = short.content.split('\n').filter((l) => !l.startsWith('CR-shower,continuum,alt2,8,')).join('\n');
    let res = await upload(short, { method: 'envelope' }, true);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/column "template": template "alt2" gives 7 bins but region "CR-shower" has 8/);
    res = await upload(file([Array(8).fill(1.05)]), { method: 'envelope' }, true);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/column "template": has 1 template; an envelope or a replica set needs at least two/);
    const negative = file([Array(8).fill(1.05), Array(8).fill(0.97)]);
    negative.content = negative.content.replace(/\nCR-shower,continuum,alt1,3,[^\n]*/, '\nCR-shower,continuum,alt1,3,-4');
    res = await upload(negative, { method: 'spread' }, true);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/Row 4, column "yield": -4 must not be negative/);
    res = await upload(file([Array(8).fill(1.05), Array(8).fill(0.97)]), { method: 'average' }, true);
    expect(res.status).toBe(400);
    expect(await dbSnapshot(t)).toBe(before);
  });
});
