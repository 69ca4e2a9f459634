import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitModel } from '../../server/fit';
import { impactChecksIdle } from '../../server/services/impact-checks.service';
import { versionModel } from '../../server/db/fits.repository';
import { fits } from '../../server/db/schema';
import { eq } from 'drizzle-orm';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const C = '/api/analyses/cascade-rate';

describe('what an upload does to the latest fit', () => {
  let t: TestApp;
  let analyst: Client;
  let contact: Client;
  let fitId: number;
  let before: { mu: number; sigma: number; head: unknown };
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, contact] = await Promise.all([DEMO.analyst, DEMO.contact].map((e) => signedIn(t.app, e)));
    const version = (await analyst.send('post', `${C}/versions`, {})).body.number;
    fitId = (await analyst.send('post', `${C}/fits`, { version, options: { dataset: 'observed', impacts: 'full' } })).body.id;
    await t.fits.idle();
    const head = (await analyst.get(`${C}/fits/${fitId}`)).body;
    before = { mu: head.result.summary.mu.value, sigma: head.result.summary.mu.error, head };
  });
  afterAll(async () => t.close());

  /** energy_scale (Juno's) in the signal region, its cascade tilt doubled: a real change to μ̂ */
  async function uploadSteeperScale(save: boolean) {
    const model = (await contact.get(`${C}/model`)).body;
    const nominal = model.templates.find((x: { region: string; process: string }) => x.region === 'SR' && x.process === 'cascade').nominal as number[];
    const rows = nominal.map((n, b) => `SR,cascade,shape,${b + 1},${n * (1 + 0.12 * (b / (nominal.length - 1) - 0.5))},${n * (1 - 0.12 * (b / (nominal.length - 1) - 0.5))}`);
    return contact.upload(`${C}/entries/energy_scale/variations${save ? '?save=1' : ''}`, { name: 'steeper.csv', content: ['region,process,kind,bin,up,down', ...rows].join('\n') + '\n' });
  }

  it('refits the latest fit with the new effects once a variation is saved, and shows the change on the entry', async () => {
    const fitsBefore = (await analyst.get(`${C}/fits`)).body.length;
    const saved = await uploadSteeperScale(true);
    expect(saved.status).toBe(201);
    await impactChecksIdle();
    const entry = (await contact.get(`${C}/entries/energy_scale`)).body;
    const check = entry.impactCheck;
    expect(check).toMatchObject({ state: 'done', fit: { id: fitId }, failure: null });
    expect(check.mu.before).toBe(before.mu);
    expect(check.muError.before).toBe(before.sigma);
    // the reference: a cold fit of the changed model through the engine's public call
    const [row] = await t.database.db.select().from(fits).where(eq(fits.id, fitId));
    const model = exchangeModelSchema.parse(await versionModel(t.database.db, row.modelVersionId));
    const entryNow = (await contact.get(`${C}/exchange`)).body.systematics.find((s: { key: string }) => s.key === 'energy_scale');
    const changed = { ...model, systematics: [...model.systematics.filter((s) => s.key !== 'energy_scale'), entryNow] };
    const cold = await fitModel(changed, { dataset: 'observed', impacts: 'none', expected: false });
    expect(Math.abs(check.mu.after - cold.summary!.mu.value)).toBeLessThan(1e-4 * cold.summary!.mu.error!);
    expect(Math.abs(check.muError.after - cold.summary!.mu.error!) / cold.summary!.mu.error!).toBeLessThan(1e-3);
    expect(check.focus).toEqual([expect.objectContaining({ name: 'energy_scale', rankBefore: expect.any(Number), rankAfter: expect.any(Number) })]);
    expect(check.focus[0].impact.up).not.toBeNull();
    // stored fits are not touched
    expect((await analyst.get(`${C}/fits`)).body.length).toBe(fitsBefore);
    expect((await analyst.get(`${C}/fits/${fitId}`)).body).toEqual(before.head);
  });

  it('checks nothing for a preview', async () => {
    const res = await uploadSteeperScale(false);
    expect(res.status).toBe(200);
    await impactChecksIdle();
    const entry = (await contact.get(`${C}/entries/energy_scale`)).body;
    expect(entry.impactCheck.createdAt).toBeDefined();
  });
});

describe('what an upload does, while blinded', () => {
  it('compares with the latest fit whose numbers may be shown: a control-region fit holds μ, so no μ̂ and no impact on it', async () => {
    const t = await createTestApp();
    try {
      const [analyst, contact] = await Promise.all([DEMO.analyst, DEMO.contact].map((e) => signedIn(t.app, e)));
      const V = '/api/analyses/vireon-search';
      const version = (await analyst.send('post', `${V}/versions`, {})).body.number;
      await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'observed', controlOnly: true, impacts: 'none' } });
      await t.fits.idle();
      const res = await contact.upload(`${V}/entries/flare_id/variations?save=1`, { name: 'v.csv', content: 'region,process,kind,bin,up,down\nCR-shower,showerpair,scale,,1.2,0.8\n' });
      expect(res.status).toBe(201);
      await impactChecksIdle();
      const check = (await contact.get(`${V}/entries/flare_id`)).body.impactCheck;
      expect(check.state).toBe('done');
      expect(check.mu.fixed).toBe(true);
      expect(check.focus[0].impact).toBeNull();
      // its own parameter: pulled and constrained by the control region before and after, both shown
      expect(check.focus[0].pull.before).toEqual(expect.any(Number));
      expect(check.focus[0].pull.after).toEqual(expect.any(Number));
      expect(check.focus[0].constraint.after).toEqual(expect.any(Number));
      // a 20 % normalisation in the control region is not what the old effect said: the constraint changes
      expect(check.focus[0].constraint.after).not.toBeCloseTo(check.focus[0].constraint.before, 3);
      // the control region becomes a signal region, so blinded: the check compared with its data is withheld
      expect((await analyst.send('patch', `${V}/regions/CR-shower`, { role: 'signal' })).status).toBe(200);
      const later = (await contact.get(`${V}/entries/flare_id`)).body.impactCheck;
      expect(later).toMatchObject({ state: 'withheld', mu: null, muError: null, focus: [], moved: [] });
    } finally {
      await t.close();
    }
  });
});
