import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { and, eq } from 'drizzle-orm';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { PruningItem, PruningOverview } from '@shared/schemas/register';
import { fitModel } from '../../server/fit';
import { versionModel } from '../../server/db/fits.repository';
import { effects, modelVersions } from '../../server/db/schema';
import { impactChecksIdle } from '../../server/services/impact-checks.service';
import { flatShapeP, normalisationOf, pruneModel, pruningReason } from '../../server/variations/pruning';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const rules = { belowPct: 0.1, shapeP: 0.05 };

describe('the pruning rules', () => {
  it('propose an effect that moves no bin by the threshold, unless it fills a bin the nominal leaves empty', () => {
    expect(pruningReason(rules, { kind: 'scale', up: 1.0009, down: 0.9992, nominal: [10], largestPct: 0.09, flatP: null })).toEqual({ rule: 'small', largestPct: 0.09 });
    expect(pruningReason(rules, { kind: 'scale', up: 1.001, down: 0.999, nominal: [10], largestPct: 0.1, flatP: null })).toBeNull();
    // 0 events nominal, 0.5 varied: no relative size, but not nothing
    expect(pruningReason(rules, { kind: 'shape', up: [10, 0.5], down: [10, 0], nominal: [10, 0], largestPct: 0, flatP: null })).toBeNull();
  });

  it('propose a shape flat within its noise, keeping Σν±/Σν⁰ as its normalisation (hand computation)', () => {
    const nominal = [100, 50, 25, 0];
    const up = [103, 52, 25.5, 0];
    const down = [97, 49, 24, 0];
    // Σν⁰ = 175, Σν⁺ = 180.5, Σν⁻ = 170
    expect(normalisationOf(nominal, up, down)).toEqual({ up: 180.5 / 175, down: 170 / 175 });
    const reason = pruningReason(rules, { kind: 'shape', up, down, nominal, largestPct: 4, flatP: 0.6 });
    expect(reason).toEqual({ rule: 'flat-shape', p: 0.6, estimated: true, normalisation: { up: 180.5 / 175, down: 170 / 175 } });
    expect(pruningReason(rules, { kind: 'shape', up, down, nominal, largestPct: 4, flatP: 0.01 })).toBeNull();
    // a varied template with no events at all has no valid ratio
    expect(normalisationOf(nominal, up, [0, 0, 0, 0])).toBeNull();
  });

  it('take the smaller p of the two shifts against a flat shift, each Pearson χ² with B − 1 degrees of freedom', () => {
    const nominal = [100, 80, 60];
    const variance = [4, 4, 4]; // shift error σ² = 2 × 4 = 8 (docs/uploads.md: estimated as an independent sample)
    const up = [104, 83, 64];
    const down = [98, 79, 59];
    const p = (varied: number[]) => {
      const d = varied.map((v, b) => v - nominal[b]);
      const c = d.reduce((s, x, b) => s + x * nominal[b], 0) / nominal.reduce((s, n) => s + n * n, 0);
      const chi2 = d.reduce((s, x, b) => s + (x - c * nominal[b]) ** 2 / 8, 0);
      // jStat's χ² distribution as the reference (npm jstat)
      return 1 - jStat.chisquare.cdf(chi2, 2);
    };
    expect(flatShapeP(nominal, up, down, { up: null, down: null }, variance)).toBeCloseTo(Math.min(p(up), p(down)), 10);
    expect(flatShapeP(nominal, up, down, { up: null, down: null }, null)).toBeNull();
  });

  it('leave out dropped effects, turn a kept normalisation into a scale effect multiplied into the systematic’s own, and leave out a systematic with nothing left', () => {
    const model = {
      templates: [{ region: 'SR', process: 'sig', nominal: [100, 75] }],
      systematics: [
        {
          key: 'jes',
          effects: [
            { region: 'SR', process: 'sig', kind: 'scale', up: 1.05, down: 0.96 },
            { region: 'SR', process: 'sig', kind: 'shape', up: [102, 78], down: [99, 73] },
          ],
        },
        { key: 'pileup', effects: [{ region: 'SR', process: 'sig', kind: 'scale', up: 1.0005, down: 0.9995 }] },
        { key: 'tune', effects: [{ region: 'SR', process: 'sig', kind: 'shape', up: [101, 74], down: [99, 76] }] },
      ],
    } as unknown as ExchangeModel;
    const pruned = pruneModel(model, [
      { systematic: 'jes', region: 'SR', process: 'sig', kind: 'shape', as: 'normalisation' },
      { systematic: 'pileup', region: 'SR', process: 'sig', kind: 'scale', as: 'dropped' },
      { systematic: 'tune', region: 'SR', process: 'sig', kind: 'shape', as: 'normalisation' },
    ]);
    // the scale effects act in log space (docs/likelihood.md §2): ln κ₁ + ln r = ln (κ₁ r), so the product is the same yield at every θ
    expect(pruned.systematics).toEqual([
      { key: 'jes', effects: [{ region: 'SR', process: 'sig', kind: 'scale', up: 1.05 * (180 / 175), down: 0.96 * (172 / 175) }] },
      { key: 'tune', effects: [{ region: 'SR', process: 'sig', kind: 'scale', up: 175 / 175, down: 175 / 175 }] },
    ]);
    expect(pruneModel(model, [])).toBe(model);
  });
});

const C = '/api/analyses/cascade-rate';

describe('pruning in an analysis', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let overview: PruningOverview;
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader] = await Promise.all([DEMO.analyst, DEMO.reader].map((e) => signedIn(t.app, e)));
    const version = (await analyst.send('post', `${C}/versions`, {})).body.number;
    await analyst.send('post', `${C}/fits`, { version, options: { dataset: 'observed', impacts: 'none' } });
    await t.fits.idle();
    // a wider threshold, so that the demo has effects under both rules
    const changed = await analyst.send('put', `${C}/pruning/rules`, { belowPct: 2.2, shapeP: 0.05 });
    expect(changed.status).toBe(200);
    overview = changed.body;
  });
  afterAll(async () => t.close());

  const frozen = async () => {
    const number = (await analyst.send('post', `${C}/versions`, { note: 'after pruning' })).body.number as number;
    const [row] = await t.database.db.select().from(modelVersions).where(and(eq(modelVersions.number, number)));
    return versionModel(t.database.db, row.id) as Promise<ExchangeModel>;
  };
  const holds = (model: ExchangeModel, item: PruningItem, kind = item.kind) =>
    model.systematics.find((s) => s.key === item.entry.key)?.effects.find((e) => e.region === item.region && e.process === item.process && e.kind === kind);

  it('lists the candidates with the reason each rule gives, checked against the entry page’s own χ² tests', async () => {
    expect(overview.rules).toEqual({ belowPct: 2.2, shapeP: 0.05 });
    expect(overview.reference).toMatchObject({ id: expect.any(Number) });
    const small = overview.candidates.filter((c) => c.reason?.rule === 'small');
    const flat = overview.candidates.filter((c) => c.reason?.rule === 'flat-shape');
    expect(small.length).toBeGreaterThan(0);
    expect(flat.length).toBeGreaterThan(0);
    for (const c of small) expect(c.largestPct).toBeLessThan(2.2);
    for (const c of flat.slice(0, 3)) {
      const entry = (await reader.get(`${C}/entries/${c.entry.key}`)).body;
      const effect = entry.effects.find((e: { id: number }) => e.id === c.effectId);
      expect(c.flatP).toBeCloseTo(Math.min(effect.precision.up.againstFlat.p, effect.precision.down.againstFlat.p), 10);
      expect(c.flatP!).toBeGreaterThan(0.05);
    }
    // the register counts them per entry
    const register = (await reader.get(`${C}/entries`)).body as { key: string; pruning: { candidates: number } }[];
    const perEntry = new Map<string, number>();
    for (const c of overview.candidates) perEntry.set(c.entry.key, (perEntry.get(c.entry.key) ?? 0) + 1);
    for (const row of register) expect(row.pruning.candidates).toBe(perEntry.get(row.key) ?? 0);
  });

  it('refuses rules out of range, naming the field, and keeps the old ones', async () => {
    const res = await analyst.send('put', `${C}/pruning/rules`, { belowPct: -1, shapeP: 1.5 });
    expect(res.status).toBe(400);
    expect(res.body.error.issues.map((i: { path: string[] }) => i.path.join('.')).sort()).toEqual(['belowPct', 'shapeP']);
    expect((await reader.get(`${C}/pruning`)).body.rules).toEqual({ belowPct: 2.2, shapeP: 0.05 });
    expect((await reader.send('put', `${C}/pruning/rules`, { belowPct: 2.2, shapeP: 0.05 })).status).toBe(403);
  });

  it('previews what pruning does: the latest fit’s configuration refitted without the selection, as a cold fit of that model finds it', async () => {
    const small = overview.candidates.find((c) => c.reason?.rule === 'small')!;
    const flat = overview.candidates.find((c) => c.reason?.rule === 'flat-shape')!;
    const started = await analyst.send('post', `${C}/pruning/previews`, { effects: [{ id: small.effectId }, { id: flat.effectId }] });
    expect(started.status).toBe(202);
    expect(started.body.selection.map((s: { as: string }) => s.as)).toEqual(['dropped', 'normalisation']);
    await impactChecksIdle();
    const preview = (await reader.get(`${C}/pruning/previews/${started.body.id}`)).body;
    expect(preview).toMatchObject({ state: 'done', failure: null, absent: [], fit: { id: overview.reference!.id } });
    const head = (await reader.get(`${C}/fits/${overview.reference!.id}`)).body;
    expect(preview.mu.before).toBe(head.result.summary.mu.value);
    const [fitRow] = (await reader.get(`${C}/fits`)).body.filter((f: { id: number }) => f.id === overview.reference!.id);
    const [version] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.number, fitRow.version));
    const model = (await versionModel(t.database.db, version.id)) as ExchangeModel;
    const cold = await fitModel(
      pruneModel(model, [
        { systematic: small.entry.key, region: small.region, process: small.process, kind: small.kind, as: 'dropped' },
        { systematic: flat.entry.key, region: flat.region, process: flat.process, kind: 'shape', as: 'normalisation' },
      ]),
      { dataset: 'observed', impacts: 'none', expected: false },
    );
    expect(Math.abs(preview.mu.after - cold.summary!.mu.value)).toBeLessThan(1e-4 * cold.summary!.mu.error!);
    expect(Math.abs(preview.muError.after - cold.summary!.mu.error!) / cold.summary!.mu.error!).toBeLessThan(1e-3);
  });

  it('refuses a selection with an unknown effect or a normalisation for a scale effect, and prunes nothing', async () => {
    const scale = overview.candidates.find((c) => c.kind === 'scale') ?? overview.candidates.find((c) => c.reason?.rule === 'small')!;
    const res = await analyst.send('post', `${C}/pruning`, { effects: [{ id: overview.candidates[0].effectId }, { id: 987654 }] });
    expect(res.status).toBe(422);
    expect(res.body.error.issues[0].path).toEqual(['effects', 1, 'id']);
    if (scale.kind === 'scale') {
      const wrong = await analyst.send('post', `${C}/pruning`, { effects: [{ id: scale.effectId, as: 'normalisation' }] });
      expect(wrong.status).toBe(422);
      expect(wrong.body.error.issues[0].path).toEqual(['effects', 0, 'as']);
    }
    const after = (await reader.get(`${C}/pruning`)).body as PruningOverview;
    expect(after.pruned).toEqual([]);
  });

  it('prunes with a comment: marked on the entry, in its history and the register, and left out of the next frozen version; restoring puts it back', async () => {
    const small = overview.candidates.find((c) => c.reason?.rule === 'small')!;
    const flat = overview.candidates.find((c) => c.reason?.rule === 'flat-shape')!;
    const res = await analyst.send('post', `${C}/pruning`, { effects: [{ id: small.effectId }, { id: flat.effectId }], comment: 'Below the analysis threshold.' });
    expect(res.status).toBe(200);
    expect(new Map(res.body.pruned.map((p: PruningItem) => [p.effectId, p.pruned]))).toEqual(
      new Map([
        [small.effectId, 'dropped'],
        [flat.effectId, 'normalisation'],
      ]),
    );
    expect(res.body.candidates.some((c: PruningItem) => c.effectId === small.effectId || c.effectId === flat.effectId)).toBe(false);

    const entry = (await reader.get(`${C}/entries/${small.entry.key}`)).body;
    expect(entry.effects.find((e: { id: number }) => e.id === small.effectId).pruned).toBe('dropped');
    expect(entry.revisions[0]).toMatchObject({ action: 'effects.pruned', summary: expect.stringContaining('Below the analysis threshold.') });
    const register = (await reader.get(`${C}/entries`)).body as { key: string; pruning: { pruned: number } }[];
    expect(register.find((r) => r.key === small.entry.key)!.pruning.pruned).toBeGreaterThanOrEqual(1);

    const version = await frozen();
    expect(holds(version, small)).toBeUndefined();
    expect(holds(version, flat, 'shape')).toBeUndefined();
    // the shape's normalisation, Σν±/Σν⁰ of its template, times any scale effect of its own there
    const model = (await analyst.get(`${C}/model`)).body as ExchangeModel;
    const nominal = model.templates.find((x) => x.region === flat.region && x.process === flat.process)!.nominal;
    const [row] = await t.database.db.select().from(effects).where(eq(effects.id, flat.effectId));
    const ratio = normalisationOf(nominal, row.up as number[], row.down as number[])!;
    // the pruned list carries it, so that the screen shows the κ the version keeps
    const listed = new Map((res.body.pruned as PruningItem[]).map((p) => [p.effectId, p]));
    expect(listed.get(flat.effectId)!.normalisation).toEqual(ratio);
    if (small.kind === 'scale') expect(listed.get(small.effectId)!.normalisation).toBeNull();
    const scale = holds(version, flat, 'scale') as { up: number; down: number };
    const ownScale = (await reader.get(`${C}/entries/${flat.entry.key}`)).body.effects.find((e: { region: string; process: string; kind: string }) => e.region === flat.region && e.process === flat.process && e.kind === 'scale');
    expect(scale.up).toBeCloseTo(ratio.up * (ownScale?.up ?? 1), 12);
    expect(scale.down).toBeCloseTo(ratio.down * (ownScale?.down ?? 1), 12);

    const restored = await analyst.send('post', `${C}/pruning/restore`, { effects: [small.effectId, flat.effectId], comment: 'Kept after all.' });
    expect(restored.status).toBe(200);
    expect(restored.body.pruned).toEqual([]);
    const again = await frozen();
    expect(holds(again, small)).toBeDefined();
    expect(holds(again, flat, 'shape')).toBeDefined();
    expect((await analyst.send('post', `${C}/pruning/restore`, { effects: [small.effectId] })).status).toBe(422);
  });
});

describe('pruning while blinded', () => {
  it('previews only against a fit whose numbers may be shown', async () => {
    const t = await createTestApp();
    try {
      const analyst = await signedIn(t.app, DEMO.analyst);
      const V = '/api/analyses/vireon-search';
      const version = (await analyst.send('post', `${V}/versions`, {})).body.number;
      const overview = (await analyst.get(`${V}/pruning`)).body as PruningOverview;
      expect(overview.reference).toBeNull();
      const res = await analyst.send('post', `${V}/pruning/previews`, { effects: [{ id: overview.candidates[0].effectId }] });
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/No converged fit/);
      // a control-region fit may be shown: μ is held, pulls and constraints compared
      await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'observed', controlOnly: true, impacts: 'none' } });
      await t.fits.idle();
      const started = await analyst.send('post', `${V}/pruning/previews`, { effects: [{ id: overview.candidates[0].effectId }] });
      expect(started.status).toBe(202);
      await impactChecksIdle();
      const preview = (await analyst.get(`${V}/pruning/previews/${started.body.id}`)).body;
      expect(preview.state).toBe('done');
      expect(preview.mu.fixed).toBe(true);
    } finally {
      await t.close();
    }
  });
});
