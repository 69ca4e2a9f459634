import { desc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { effects, modelVersions, outbox, revisions } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const C = '/api/analyses/cascade-rate';

type EffectView = { id: number; region: string; process: string; kind: string; up: number[]; down: number[]; nominal: number[]; warnings: { code: string; bins?: number[] }[]; stale: { since: string; nominalAtUpload: number[] } | null };

describe('variations that go stale when their nominal changes', () => {
  let t: TestApp;
  let analyst: Client;
  let convener: Client;
  let oldNominal: number[] = [];
  let newNominal: number[] = [];
  let effect: EffectView;
  const shapeOnSignal = async () => ((await analyst.get(`${C}/entries/energy_scale`)).body.effects as EffectView[]).find((e) => e.kind === 'shape' && e.region === 'SR' && e.process === 'cascade')!;
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, convener] = await Promise.all([DEMO.analyst, DEMO.convener].map((e) => signedIn(t.app, e)));
    effect = await shapeOnSignal();
    oldNominal = effect.nominal;
    // a new nominal: bins 2 and 4 change
    newNominal = oldNominal.map((v, i) => (i === 1 ? v * 1.2 : i === 3 ? v * 0.8 : v));
  });
  afterAll(async () => t.close());

  it('marks the shape effects made against the old nominal, recomputes them, sends the accepted entry back to review and e-mails its owner', async () => {
    expect(effect.stale).toBeNull();
    expect((await analyst.get(`${C}/entries/energy_scale`)).body.state).toBe('accepted');
    const before = (await t.database.db.select({ id: outbox.id }).from(outbox).orderBy(desc(outbox.id)).limit(1))[0]?.id ?? 0;
    const res = await analyst.send('put', `${C}/templates/SR/cascade`, { nominal: newNominal });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const entry = (await analyst.get(`${C}/entries/energy_scale`)).body;
    const now = (entry.effects as EffectView[]).find((e) => e.id === effect.id)!;
    expect(now.stale).toEqual({ since: expect.any(String), nominalAtUpload: oldNominal });
    expect(now.nominal).toEqual(newNominal);
    const warning = now.warnings.find((w) => w.code === 'nominal-changed')!;
    expect(warning.bins).toEqual([1, 3]);
    // the effect's other templates (continuum) are not touched
    expect((entry.effects as EffectView[]).filter((e) => e.stale !== null)).toHaveLength(1);
    // its largest effect, recomputed against the new nominal: max |v − ν|/ν over the bins (by hand)
    const [row] = await t.database.db.select().from(effects).where(eq(effects.id, effect.id));
    const byHand = Math.max(...[effect.up, effect.down].flatMap((v) => v.map((x, i) => (newNominal[i] > 0 ? (100 * Math.abs(x - newNominal[i])) / newNominal[i] : 0))));
    expect(row.largestPct).toBeCloseTo(byHand, 9);
    // back to review, with an automatic note, and its owner is told
    expect(entry.state).toBe('submitted');
    expect(entry.revisions[0].summary).toMatch(/^Sent back to review automatically: the nominal template of process "cascade" in region "SR" changed/);
    await t.mailer.idle();
    const mails = (await t.database.db.select().from(outbox).orderBy(desc(outbox.id))).filter((m) => m.id > before);
    expect(mails.map((m) => [m.to, m.subject])).toEqual([[DEMO.contact, '[cascade-rate] energy_scale: the nominal changed since its variation was uploaded']]);
    expect(mails[0].body).toMatch(/went back to review/);
  });

  it('lists the stale effects for the freeze form', async () => {
    expect((await convener.get(`${C}/versions/stale-effects`)).body).toEqual([{ effectId: effect.id, entry: 'energy_scale', region: 'SR', process: 'cascade', since: expect.any(String), bins: [2, 4] }]);
  });

  it('refuses to freeze while an effect is stale without a choice for it, naming the field, and saves nothing', async () => {
    const snapshot = await dbSnapshot(t);
    const none = await analyst.send('post', `${C}/versions`, { note: 'with a stale effect' });
    expect(none.status).toBe(400);
    expect(none.body.error.issues).toEqual([{ path: ['staleChoices'], message: `missing a choice for effect ${effect.id}` }]);
    expect(none.body.error.message).toMatch(/energy_scale on cascade in SR/);
    const unknown = await analyst.send('post', `${C}/versions`, { staleChoices: [{ effectId: effect.id, keep: 'relative' }, { effectId: 999999, keep: 'absolute' }] });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.issues).toEqual([{ path: ['staleChoices', 1, 'effectId'], message: 'effect 999999 is not a stale effect of this analysis' }]);
    const bad = await analyst.send('post', `${C}/versions`, { staleChoices: [{ effectId: effect.id, keep: 'sideways' }] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.issues[0].path).toEqual(['staleChoices', 0, 'keep']);
    expect(await dbSnapshot(t)).toEqual(snapshot);
  });

  it('keeps a stale effect as a relative shift: the frozen variation is rescaled bin by bin by new/old nominal, and the choice is in the revision', async () => {
    const frozen = await analyst.send('post', `${C}/versions`, { note: 'relative', staleChoices: [{ effectId: effect.id, keep: 'relative' }] });
    expect(frozen.status, JSON.stringify(frozen.body)).toBe(201);
    const [v] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.sha256, frozen.body.sha256));
    const model = v.model as ExchangeModel;
    const inModel = model.systematics.find((s) => s.key === 'energy_scale')!.effects.find((e) => e.region === 'SR' && e.process === 'cascade')!;
    if (inModel.kind !== 'shape') throw new Error('expected a shape');
    inModel.up.forEach((u, i) => expect(u).toBeCloseTo((effect.up[i] * newNominal[i]) / oldNominal[i], 9));
    inModel.down.forEach((d, i) => expect(d).toBeCloseTo((effect.down[i] * newNominal[i]) / oldNominal[i], 9));
    // a relative shift keeps the ratio to nominal in every bin
    inModel.up.forEach((u, i) => expect(u / newNominal[i]).toBeCloseTo(effect.up[i] / oldNominal[i], 9));
    const now = await shapeOnSignal();
    expect(now.stale).toBeNull();
    expect(now.warnings.some((w) => w.code === 'nominal-changed')).toBe(false);
    const [rev] = await t.database.db.select().from(revisions).where(eq(revisions.action, 'version.frozen')).orderBy(desc(revisions.id)).limit(1);
    expect(rev.summary).toContain('Stale effects: energy_scale on cascade in SR: kept as a relative shift');
    expect(rev.after).toMatchObject({ staleChoices: [{ effectId: effect.id, keep: 'relative' }] });
  });

  it('keeps absolute yields when asked, and a nominal changed back makes an effect current again', async () => {
    const upBefore = (await shapeOnSignal()).up;
    await analyst.send('put', `${C}/templates/SR/cascade`, { nominal: oldNominal });
    expect((await shapeOnSignal()).stale).toEqual({ since: expect.any(String), nominalAtUpload: newNominal });
    // changed back to the nominal it was made against: current again
    await analyst.send('put', `${C}/templates/SR/cascade`, { nominal: newNominal });
    expect((await shapeOnSignal()).stale).toBeNull();
    await analyst.send('put', `${C}/templates/SR/cascade`, { nominal: oldNominal });
    const frozen = await analyst.send('post', `${C}/versions`, { staleChoices: [{ effectId: effect.id, keep: 'absolute' }] });
    expect(frozen.status).toBe(201);
    const now = await shapeOnSignal();
    expect(now.up).toEqual(upBefore);
    expect(now.stale).toBeNull();
    // the entry was not accepted this time (it is still under review): it stays submitted
    expect((await convener.get(`${C}/entries/energy_scale`)).body.state).toBe('submitted');
  });
});
