import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const A = '/api/analyses/vireon-search';
const ENTRY = `${A}/entries/flare_id`;

describe('smoothing a shape effect', () => {
  let t: TestApp;
  let contact: Client;
  let nominal: number[];
  let effectId: number;
  // relative shifts of +10 % with one spike of +30 % in bin 2: running medians take the spike out
  const rel = [0.1, 0.3, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1];
  beforeAll(async () => {
    t = await createTestApp();
    contact = await signedIn(t.app, DEMO.contact);
    nominal = (await contact.get(`${A}/model`)).body.templates.find((x: { region: string; process: string }) => x.region === 'CR-shower' && x.process === 'continuum').nominal;
    const rows = nominal.map((n, b) => `CR-shower,continuum,shape,${b + 1},${n * (1 + rel[b])},${n * (1 - rel[b])}`);
    const saved = await contact.upload(`${ENTRY}/variations?save=1`, { name: 'spiky.csv', content: ['region,process,kind,bin,up,down', ...rows].join('\n') + '\n' });
    expect(saved.status).toBe(201);
    effectId = (await contact.get(ENTRY)).body.effects.find((e: { kind: string; region: string }) => e.kind === 'shape' && e.region === 'CR-shower').id;
  });
  afterAll(async () => t.close());

  it('previews before and after without saving anything', async () => {
    const before = await dbSnapshot(t);
    const res = await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'median-hanning' });
    expect(res.status).toBe(200);
    expect(res.body.saved).toBe(false);
    // 3R turns (0.1, 0.3, 0.1, …) into 0.1 everywhere, and Hanning keeps a constant
    res.body.after.up.forEach((v: number, b: number) => expect(v).toBeCloseTo(nominal[b] * 1.1, 9));
    res.body.after.down.forEach((v: number, b: number) => expect(v).toBeCloseTo(nominal[b] * 0.9, 9));
    expect(res.body.before.up[1]).toBeCloseTo(nominal[1] * 1.3, 9);
    // smoothed to a pure 10 % scale: flat against a flat shift, with the relative shift of the scale
    expect(res.body.precision.up.againstFlat.chi2).toBeCloseTo(0, 9);
    expect(res.body.precision.up.againstFlat.relativeShift).toBeCloseTo(0.1, 9);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('saves the smoothed effect with its method, keeps the upload, and restores it on request', async () => {
    const saved = await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'median-hanning', save: true });
    expect(saved.status).toBe(200);
    let entry = (await contact.get(ENTRY)).body;
    let effect = entry.effects.find((e: { id: number }) => e.id === effectId);
    expect(effect.smoothing).toMatchObject({ method: 'median-hanning', by: 'Juno Feldspire' });
    expect(effect.up[1]).toBeCloseTo(nominal[1] * 1.1, 9);
    expect(entry.revisions[0]).toMatchObject({ action: 'effect.smoothed', summary: expect.stringMatching(/^Smoothed with running medians of three and Hanning: the shape effect on region "CR-shower", process "continuum"/) });
    // a local regression starts again from the upload, not from the smoothed effect
    const local = await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'local-regression', window: 8, iterations: 2 });
    expect(local.body.before.up[1]).toBeCloseTo(nominal[1] * 1.1, 9);
    const restored = await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'restore', save: true });
    expect(restored.status).toBe(200);
    entry = (await contact.get(ENTRY)).body;
    effect = entry.effects.find((e: { id: number }) => e.id === effectId);
    expect(effect.smoothing).toBeNull();
    expect(effect.up[1]).toBeCloseTo(nominal[1] * 1.3, 9);
  });

  it('refuses a window wider than the region, a scale effect, a restore with nothing to restore, and another owner, saving nothing', async () => {
    const before = await dbSnapshot(t);
    const wide = await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'local-regression', window: 9, save: true });
    expect(wide.status).toBe(422);
    expect(wide.body.error.message).toMatch(/The window of 9 bins is larger than region "CR-shower", which has 8 bins/);
    expect(wide.body.error.issues[0].path).toEqual(['window']);
    const restore = await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'restore', save: true });
    expect(restore.status).toBe(409);
    const scale = (await contact.get(ENTRY)).body.effects.find((e: { kind: string }) => e.kind === 'scale');
    expect((await contact.send('post', `${ENTRY}/effects/${scale.id}/smooth`, { method: 'median-hanning', save: true })).status).toBe(409);
    const other = await signedIn(t.app, DEMO.contact2);
    expect((await other.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'median-hanning', save: true })).status).toBe(403);
    expect((await contact.send('post', `${ENTRY}/effects/${effectId}/smooth`, { method: 'spline' })).status).toBe(400);
    expect(await dbSnapshot(t)).toBe(before);
  });
});
