import { describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { CASCADE_MODES_TRUTH, demoScenario } from '../../../server/seed/scenario';

describe('the invented demo scenario', () => {
  it('is generated deterministically: two runs give the same document', () => {
    expect(JSON.stringify(demoScenario())).toBe(JSON.stringify(demoScenario()));
  });

  it('has one blinded and three unblinded analyses whose models pass the exchange-file schema', () => {
    const { analyses } = demoScenario();
    expect(analyses.map((a) => a.blinded).sort()).toEqual([false, false, false, true]);
    for (const a of analyses) {
      const parsed = exchangeModelSchema.safeParse(a.model);
      expect(parsed.error?.issues ?? []).toEqual([]);
    }
  });

  it('gives the blinded search about forty systematics in several groups, five or more backgrounds, and signal and control regions', () => {
    const search = demoScenario().analyses.find((a) => a.blinded)!;
    const model = exchangeModelSchema.parse(search.model);
    expect(model.systematics.length).toBe(40);
    expect(new Set(model.systematics.map((s) => s.group)).size).toBeGreaterThanOrEqual(5);
    expect(model.processes.filter((p) => p.kind === 'background').length).toBeGreaterThanOrEqual(5);
    expect(new Set(model.regions.map((r) => r.role))).toEqual(new Set(['signal', 'control', 'validation']));
    expect(Object.keys(search.entries).sort()).toEqual(model.systematics.map((s) => s.key).sort());
  });

  it('gives every role a person, and every register entry an owner who is a member', () => {
    const { analyses } = demoScenario();
    for (const a of analyses) {
      expect(new Set(a.members.map((m) => m.role))).toEqual(new Set(['convener', 'analyst', 'contact', 'reader']));
      const memberEmails = new Set(a.members.map((m) => m.email));
      for (const meta of Object.values(a.entries)) expect(memberEmails.has(meta.owner)).toBe(true);
    }
  });
});

describe('the signal hypotheses of the blinded search', () => {
  const search = () => exchangeModelSchema.parse(demoScenario().analyses.find((a) => a.slug === 'vireon-search')!.model);
  const peakBin = (nominal: number[]) => nominal.indexOf(Math.max(...nominal));

  it('are thirty masses in GeV, each replacing the vireon template of both signal regions and giving the shape effects the model gives the vireon there', () => {
    const model = search();
    const { parameter, points } = model.signalHypotheses!;
    expect(parameter).toEqual({ name: 'mass', unit: 'GeV' });
    expect(points.length).toBe(30);
    expect(points.map((p) => p.value)).toEqual([...points.map((p) => p.value)].sort((a, b) => a - b));
    const shapes = model.systematics.flatMap((s) => s.effects.filter((e) => e.process === 'vireon' && e.kind === 'shape' && e.region.startsWith('SR')).map((e) => `${s.key}/${e.region}`));
    expect(shapes.length).toBeGreaterThanOrEqual(6);
    for (const p of points) {
      expect(p.templates.map((t) => `${t.region}/${t.process}`)).toEqual(['SR-core/vireon', 'SR-wide/vireon']);
      expect(p.effects.map((e) => `${e.systematic}/${e.region}`).sort()).toEqual([...shapes].sort());
      for (const t of p.templates) expect(t.variance).toHaveLength(t.nominal.length);
    }
  });

  it('keep the model\u2019s own signal as the hypothesis at 1310 GeV, with its templates and effects', () => {
    const model = search();
    const own = model.signalHypotheses!.points.find((p) => p.value === 1310)!;
    for (const t of own.templates) expect(t).toEqual(model.templates.find((m) => m.region === t.region && m.process === t.process));
    for (const e of own.effects) {
      const { systematic, ...effect } = e;
      expect(model.systematics.find((s) => s.key === systematic)!.effects).toContainEqual(effect);
    }
  });

  it('move the peak with the mass, widen it and change its yield smoothly', () => {
    const points = search().signalHypotheses!.points;
    const core = points.map((p) => p.templates.find((t) => t.region === 'SR-core')!.nominal);
    const bins = core.map(peakBin);
    bins.slice(1).forEach((b, i) => expect(b).toBeGreaterThanOrEqual(bins[i]));
    expect(bins[0]).toBe(0);
    expect(bins.at(-1)).toBe(23);
    // the share of the peak bin falls as the resolution grows (away from the region's edges)
    const share = (n: number[]) => Math.max(...n) / n.reduce((a, b) => a + b, 0);
    expect(share(core[5])).toBeGreaterThan(share(core[25]));
    const totals = core.map((n) => n.reduce((a, b) => a + b, 0));
    totals.slice(1).forEach((t, i) => expect(Math.abs(t / totals[i] - 1)).toBeLessThan(0.35));
  });
});

describe('the measurement of cascade production in two modes', () => {
  const modes = () => exchangeModelSchema.parse(demoScenario().analyses.find((a) => a.slug === 'cascade-modes')!.model);
  const total = (values: number[]) => values.reduce((a, b) => a + b, 0);

  it('declares a second parameter of interest on the associated mode, μ keeping the direct mode', () => {
    const model = modes();
    expect(model.version).toBe(2);
    expect(model.parametersOfInterest!.map((q) => [q.key, q.targets.map((t) => `${t.region}/${t.process}`)])).toEqual([['mu_assoc', ['SR-direct/cascade_assoc', 'SR-assoc/cascade_assoc']]]);
    expect(model.processes.filter((p) => p.kind === 'signal').map((p) => p.key)).toEqual(['cascade_direct', 'cascade_assoc']);
    expect(model.floatingNorms.map((f) => f.key)).toEqual(['k_continuum']);
  });

  it('mixes the two modes differently in its two signal regions, each enriched in one of them', () => {
    const model = modes();
    const yieldOf = (region: string, process: string) => total(model.templates.find((t) => t.region === region && t.process === process)!.nominal);
    const share = (region: string) => yieldOf(region, 'cascade_assoc') / (yieldOf(region, 'cascade_assoc') + yieldOf(region, 'cascade_direct'));
    expect(share('SR-direct')).toBeLessThan(0.3);
    expect(share('SR-assoc')).toBeGreaterThan(0.55);
    expect(model.regions.map((r) => r.role)).toEqual(['signal', 'signal', 'control']);
  });

  it('has five to eight systematics, some acting on one mode only, and data drawn at strengths 1.1 and 0.8', () => {
    const model = modes();
    expect(model.systematics.length).toBeGreaterThanOrEqual(5);
    expect(model.systematics.length).toBeLessThanOrEqual(8);
    const modesOf = (s: (typeof model.systematics)[number]) => new Set(s.effects.map((e) => e.process).filter((p) => p.startsWith('cascade_')));
    expect(model.systematics.filter((s) => modesOf(s).size === 1).length).toBeGreaterThanOrEqual(2);
    expect(CASCADE_MODES_TRUTH).toEqual({ mu: 1.1, mu_assoc: 0.8 });
    for (const r of model.regions) expect(r.observed).toHaveLength(r.edges.length - 1);
  });
});
