import { describe, expect, it } from 'vitest';
import { Matrix, inverse } from 'ml-matrix';
import jStat from 'jstat';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitModel, syntheticModel } from '../../server/fit';
import { countingModel, expectClose } from './helpers';

/**
 * Fit variants (docs/likelihood.md §9), each checked against a computation that does not go
 * through the variant's own code path.
 */

const s = (x: number) => x * x;
const interp = (t: number, a: number, b: number) => {
  // the smooth rule of §2, written out again here for the reference model
  const sm = Math.abs(t) < 1 ? (t * (3 * t ** 4 - 10 * t ** 2 + 15)) / 8 : Math.sign(t);
  return (t / 2) * (a - b + (a + b) * sm);
};

/**
 * The reference for a held parameter: the same model without it, its effects applied at the held
 * value (shape offsets added to the nominal; scale factors multiplying the sample's nominal and
 * varied templates), and every variance of a changed bin scaled so that the relative width of
 * its γ, √Σv / Σν⁰ over the templates with a variance, stays what the nominal gives.
 */
function withEffectApplied(model: ExchangeModel, key: string, value: number): ExchangeModel {
  const m = structuredClone(model);
  const j = m.systematics.findIndex((x) => x.key === key);
  const effects = m.systematics[j].effects;
  m.systematics.splice(j, 1);
  const binSum = (region: string) => {
    const bins = m.regions.find((r) => r.key === region)!.edges.length - 1;
    return Array.from({ length: bins }, (_, b) => m.templates.filter((t) => t.region === region && t.variance && t.variance[b] > 0).reduce((acc, t) => acc + t.nominal[b], 0));
  };
  const before = new Map(m.regions.map((r) => [r.key, binSum(r.key)]));
  // per template: the shape offset at the held value (from the nominal) and the scale factor
  for (const t of m.templates) {
    const mine = effects.filter((e) => e.region === t.region && e.process === t.process);
    if (!mine.length) continue;
    const add = t.nominal.map((n, b) => mine.reduce((acc, e) => acc + (e.kind === 'shape' ? interp(value, e.up[b] - n, e.down[b] - n) : 0), 0));
    const f = mine.reduce((acc, e) => acc * (e.kind === 'scale' ? Math.exp(interp(value, Math.log(e.up), Math.log(e.down))) : 1), 1);
    // ν = max(0, ν⁰ + add + Σ other offsets) × f × …: ν⁰′ = f(ν⁰ + add) and each other varied template f(ν± + add)
    for (const other of m.systematics)
      for (const o of other.effects)
        if (o.kind === 'shape' && o.region === t.region && o.process === t.process) {
          o.up = o.up.map((v, b) => f * (v + add[b]));
          o.down = o.down.map((v, b) => f * (v + add[b]));
        }
    t.nominal = t.nominal.map((n, b) => f * (n + add[b]));
  }
  for (const r of m.regions) {
    const after = binSum(r.key);
    const was = before.get(r.key)!;
    for (const t of m.templates) if (t.region === r.key && t.variance) t.variance = t.variance.map((v, b) => (was[b] > 0 ? v * s(after[b] / was[b]) : v));
  }
  return m;
}

describe('held parameters (§9.1)', () => {
  it('give the fit of the same model with the parameter removed and its effect applied at the held value', async () => {
    const model = syntheticModel('small', 3);
    // a systematic with both shape and scale effects, held away from its best fit
    const key = model.systematics.find((x) => x.effects.some((e) => e.kind === 'shape') && x.effects.length > 1)!.key;
    const held = await fitModel(model, { impacts: 'none', expected: false, hold: [{ parameter: key, value: 0.7 }] });
    const reference = await fitModel(withEffectApplied(model, key, 0.7), { impacts: 'none', expected: false });
    expect(held.status).toBe('converged');
    expect(reference.status).toBe('converged');
    const h = held.parameters.find((p) => p.name === key)!;
    expect(h).toMatchObject({ value: 0.7, fixed: true, error: null });
    expect(held.variant!.held).toEqual([{ parameter: key, value: 0.7, asked: 0.7 }]);
    expect(held.nuisance.find((n) => n.name === key)).toMatchObject({ fixed: true, constraint: null, rank: null });
    for (const p of reference.parameters) {
      const q = held.parameters.find((x) => x.name === p.name)!;
      expectClose(q.value, p.value, 0, 1e-6 * (p.error ?? 1));
      expectClose(q.error, p.error!, 1e-5);
    }
    // the NLLs differ by the held parameter's constraint, 0.7²/2 (the reference has no such term)
    expectClose(held.convergence.nll! - reference.convergence.nll!, 0.245, 1e-7, 1e-7);
    // a held parameter leaves the correlations
    expect(held.correlation!.names).not.toContain(key);
  });

  it('hold at "best" the value of the fit with nothing held, and a group holds every parameter of it', async () => {
    const model = syntheticModel('small', 3);
    const free = await fitModel(model, { impacts: 'none', expected: false });
    const group = model.systematics.find((x) => x.group)!.group!;
    const members = model.systematics.filter((x) => x.group === group).map((x) => x.key);
    const held = await fitModel(model, { impacts: 'none', expected: false, holdGroups: [group] });
    // holding at the minimum moves nothing: every value stays, and the held ones leave V
    for (const p of free.parameters) expectClose(held.parameters.find((x) => x.name === p.name)!.value, p.value, 0, 1e-6 * (p.error ?? 1));
    expect(held.parameters.filter((p) => p.fixed).map((p) => p.name).sort()).toEqual(expect.arrayContaining(members.sort()));
    expect(held.variant!.held.every((h) => h.asked === 'best')).toBe(true);
  });

  it('refuse an unknown parameter or group, and every parameter held, naming the option', async () => {
    const model = countingModel({ s: 10, b: 50, n: 62 });
    await expect(fitModel(model, { hold: [{ parameter: 'nothing', value: 0 }] })).rejects.toMatchObject({ path: ['hold', 0, 'parameter'] });
    await expect(fitModel(model, { holdGroups: ['nobody'] })).rejects.toMatchObject({ path: ['holdGroups', 0] });
    await expect(fitModel(model, { hold: [{ parameter: 'mu', value: 1 }] })).rejects.toThrow(/every parameter is held/);
  });
});

describe('statistics only (§9.2)', () => {
  it('gives σ_μ = √n / s in one bin with a systematic on the background (Cowan et al. 2011, check 1 of §8: μ̂ = (n − b)/s, so σ_μ² = n/s²)', async () => {
    const model = countingModel({ s: 20, b: 100, n: 135 }, { systematics: [{ key: 'bnorm', group: 'background', effects: [{ region: 'SR', process: 'bkg', kind: 'scale', up: 1.1, down: 0.9 }] }] });
    const r = await fitModel(model, { impacts: 'none', expected: false, statOnly: true, scan: true });
    expect(r.status).toBe('converged');
    const b = 100 * Math.exp(interp(r.parameters.find((p) => p.name === 'bnorm')!.value, Math.log(1.1), Math.log(0.9)));
    expectClose(r.summary!.mu.value, (135 - b) / 20, 1e-7);
    expectClose(r.summary!.mu.error, Math.sqrt(135) / 20, 1e-6);
    expect(r.variant!.statOnly).toBe(true);
  });
});

describe('no template statistics (§9.3)', () => {
  it('fits no γ, and equals the model without variances', async () => {
    const model = syntheticModel('small', 4);
    const none = await fitModel(model, { impacts: 'none', expected: false, templateStats: false });
    const stripped = await fitModel({ ...model, templates: model.templates.map(({ variance: _v, ...t }) => t) }, { impacts: 'none', expected: false });
    expect(none.gammas.count).toBe(0);
    expect(none.summary!.mu.value).toBe(stripped.summary!.mu.value);
  });
});

describe('decorrelation (§9.4)', () => {
  it('splits a systematic by region, and its χ² equals the generalised-least-squares average of the parts computed with ml-matrix (Lyons, Gibaut, Clifford, NIM A 270 (1988) 110)', async () => {
    const model = syntheticModel('small', 5);
    const key = model.systematics.find((x) => new Set(x.effects.map((e) => e.region)).size >= 2)!.key;
    const r = await fitModel(model, { impacts: 'none', expected: false, decorrelate: [{ parameter: key, by: 'region' }] });
    expect(r.status).toBe('converged');
    const [report] = r.variant!.decorrelation;
    const regions = [...new Set(model.systematics.find((x) => x.key === key)!.effects.map((e) => e.region))];
    expect(report.parts.map((p) => p.name)).toEqual(regions.map((reg) => `${key}/${reg}`));
    expect(r.parameters.some((p) => p.name === key)).toBe(false);
    // the reference: W from the reported σ and correlations, t̄ = 1ᵀW⁻¹t / 1ᵀW⁻¹1, χ² = (t − t̄)ᵀW⁻¹(t − t̄)
    const names = report.parts.map((p) => p.name);
    const c = r.correlation!;
    const idx = names.map((n) => c.names.indexOf(n));
    const sig = names.map((n) => r.parameters.find((p) => p.name === n)!.error!);
    const W = new Matrix(idx.map((i, a) => idx.map((j, b) => c.values[i * c.names.length + j] * sig[a] * sig[b])));
    const Wi = inverse(W);
    const t = Matrix.columnVector(report.parts.map((p) => p.value));
    const one = Matrix.columnVector(names.map(() => 1));
    const avg = one.transpose().mmul(Wi).mmul(t).get(0, 0) / one.transpose().mmul(Wi).mmul(one).get(0, 0);
    const d = Matrix.sub(t, Matrix.mul(one, avg));
    const chi2 = d.transpose().mmul(Wi).mmul(d).get(0, 0);
    expectClose(report.average, avg, 1e-6, 1e-9);
    expectClose(report.chi2, chi2, 1e-5, 1e-9);
    expect(report.dof).toBe(names.length - 1);
    // p-value against jstat's χ² distribution
    expectClose(report.p, 1 - jStat.chisquare.cdf(chi2, names.length - 1), 1e-6, 1e-12);
  });

  it('refuses a systematic that does not exist', async () => {
    await expect(fitModel(syntheticModel('tiny', 1), { decorrelate: [{ parameter: 'nothing', by: 'region' }] })).rejects.toMatchObject({ path: ['decorrelate', 0, 'parameter'] });
  });
});

describe('expected results with the measured background (§9.5)', () => {
  it('builds the Asimov dataset on the control-region fit with μ held at 0, and a fit to it returns that fit\u2019s values to 1e-6', async () => {
    const model = syntheticModel('small', 6);
    const controlFit = await fitModel(model, { controlOnly: true, impacts: 'none', expected: false, hold: [{ parameter: 'mu', value: 0 }] });
    const asimov = await fitModel(model, { dataset: 'asimov', asimovMu: 0, expectedFrom: 'control', impacts: 'none', expected: false });
    expect(asimov.status).toBe('converged');
    expect(asimov.variant!.expectedFrom).toBe('control');
    expect(Math.abs(asimov.summary!.mu.value)).toBeLessThan(1e-6);
    for (const p of controlFit.parameters.filter((x) => x.kind !== 'poi' && !x.fixed)) {
      const q = asimov.parameters.find((x) => x.name === p.name)!;
      expect(Math.abs(q.value - p.value), p.name).toBeLessThan(1e-6);
    }
  });
});

describe('breakdown by freezing (§9.7)', () => {
  it('adds up in quadrature to the total in a linear large-count model whose groups are nearly uncorrelated', async () => {
    // two signal regions, each with its own background systematic in its own group: the groups
    // couple only through μ, and at 1e6 counts every effect is linear
    const model: ExchangeModel = {
      ...countingModel({ s: 1e4, b: 1e6, n: 1.01e6 }),
      regions: [
        { key: 'A', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [1.011e6] },
        { key: 'B', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [1.009e6] },
      ],
      templates: [
        { region: 'A', process: 'sig', nominal: [1e4] },
        { region: 'A', process: 'bkg', nominal: [1e6] },
        { region: 'B', process: 'sig', nominal: [1e4] },
        { region: 'B', process: 'bkg', nominal: [1e6] },
      ],
      systematics: [
        { key: 'ea', group: 'ga', effects: [{ region: 'A', process: 'bkg', kind: 'scale', up: 1.0003, down: 0.9997 }] },
        { key: 'eb', group: 'gb', effects: [{ region: 'B', process: 'bkg', kind: 'scale', up: 1.0003, down: 0.9997 }] },
      ],
    };
    const r = await fitModel(model, { impacts: 'none', expected: false, scan: true, breakdown: true });
    expect(r.status).toBe('converged');
    const rows = new Map(r.variant!.breakdown!.map((x) => [x.group, x]));
    const total = (r.summary!.mu.interval68!.high! - r.summary!.mu.interval68!.low!) / 2;
    const stat = r.summary!.mu.stat!;
    const parts = ['ga', 'gb'].map((g) => ((rows.get(g)!.up! + rows.get(g)!.down!) / 2) ** 2).reduce((a, b) => a + b, 0);
    // exact when the groups are uncorrelated; here their correlation through μ is of order 10⁻² (common practice, no source)
    expectClose(Math.sqrt(parts + stat * stat), total, 2e-2);
    // and "all systematics" holds both: σ_syst² + σ_stat² = σ² by construction of the freezing
    const all = rows.get('all systematics')!;
    expectClose(Math.sqrt(((all.up! + all.down!) / 2) ** 2 + stat * stat), total, 1e-3);
    expect(rows.get('ga')!.schur).not.toBeNull();
  });
});
