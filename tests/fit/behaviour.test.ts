import { describe, expect, it } from 'vitest';
import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import { fitResultSchema } from '@shared/schemas/fit';
import { FitCancelledError, FitInputError, fitModel, normalQuantile, scanParameter, syntheticModel } from '../../server/fit';
import { curvatureAt } from '../../server/fit/covariance';
import { createScratch, minimise } from '../../server/fit/minimiser';
import { buildProblem, startPoint } from '../../server/fit/problem';
import { countingModel, expectClose } from './helpers';

function model(input: Omit<ExchangeModelInput, 'format' | 'version' | 'name'>): ExchangeModel {
  return exchangeModelSchema.parse({ format: 'plumbline.model', version: 1, name: 'test', ...input });
}

/** Two regions, three processes, scale and shape effects, template variances. */
function richModel(): ExchangeModel {
  return syntheticModel({ regions: 2, signalRegions: 1, bins: 6, processes: 3, systematics: 5, floatingNorms: 1, varianceFraction: 0.6 }, 5);
}

describe('invariance', () => {
  it('gives the same fit when the bins of every region are listed in reverse order', async () => {
    const m = richModel();
    const rev = structuredClone(m);
    for (const r of rev.regions) {
      r.observed = r.observed!.slice().reverse();
      r.edges = r.edges.map((_, i) => i); // edges stay increasing; only their labels change
    }
    for (const t of rev.templates) {
      t.nominal = t.nominal.slice().reverse();
      if (t.variance) t.variance = t.variance.slice().reverse();
    }
    for (const s of rev.systematics) for (const e of s.effects) if (e.kind === 'shape') [e.up, e.down] = [e.up.slice().reverse(), e.down.slice().reverse()];
    const [a, b] = await Promise.all([fitModel(m, { impacts: 'none', expected: false }), fitModel(rev, { impacts: 'none', expected: false })]);
    a.parameters.forEach((p, i) => {
      expectClose(b.parameters[i].value, p.value, 0, 1e-6 * (p.error ?? 1));
      expectClose(b.parameters[i].error, p.error!, 1e-6);
    });
    expectClose(b.convergence.nll, a.convergence.nll!, 1e-9, 1e-9);
  });

  it('gives the same fit when the processes and templates are listed in another order', async () => {
    const m = richModel();
    const shuffled = structuredClone(m);
    shuffled.processes.reverse();
    shuffled.templates.reverse();
    const [a, b] = await Promise.all([fitModel(m, { impacts: 'none', expected: false }), fitModel(shuffled, { impacts: 'none', expected: false })]);
    a.parameters.forEach((p, i) => expectClose(b.parameters[i].value, p.value, 0, 1e-6 * (p.error ?? 1)));
  });

  it('reports a nuisance parameter without effect (κ± = 1) with pull 0, constraint 1 and impact 0', async () => {
    const m = richModel();
    m.systematics.push({ key: 'nothing', effects: [{ region: 'SR0', process: 'bkg1', kind: 'scale', up: 1, down: 1 }] });
    const r = await fitModel(m, { impacts: 'full', expected: false });
    const row = r.nuisance.find((n) => n.name === 'nothing')!;
    expect(row.fixed).toBe(false);
    expectClose(row.pull, 0, 0, 1e-9);
    expectClose(row.constraint, 1, 1e-9);
    expectClose(row.quickImpact, 0, 0, 1e-9);
    for (const v of [row.postfitImpact!.up, row.postfitImpact!.down, row.prefitImpact!.up, row.prefitImpact!.down]) expectClose(v, 0, 0, 1e-7);
  });
});

describe('impacts', () => {
  it('are symmetric for symmetric linear variations on an Asimov dataset (to the non-linearity of the Poisson term)', async () => {
    const bkg = [40000, 30000, 20000, 10000];
    const m = model({
      regions: [{ key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1, 2, 3, 4] }],
      processes: [
        { key: 'sig', kind: 'signal' },
        { key: 'bkg', kind: 'background' },
      ],
      templates: [
        { region: 'SR', process: 'sig', nominal: [500, 2000, 2000, 500] },
        { region: 'SR', process: 'bkg', nominal: bkg },
      ],
      systematics: [
        { key: 'tilt', effects: [{ region: 'SR', process: 'bkg', kind: 'shape', up: bkg.map((v, j) => v * (1 + 0.02 * (j - 1.5))), down: bkg.map((v, j) => v * (1 - 0.02 * (j - 1.5))) }] },
        { key: 'norm', effects: [{ region: 'SR', process: 'bkg', kind: 'shape', up: bkg.map((v) => v * 1.01), down: bkg.map((v) => v * 0.99) }] },
      ],
    });
    const r = await fitModel(m, { dataset: 'asimov', asimovMu: 1, impacts: 'full', expected: false });
    for (const row of r.nuisance) {
      const { up, down } = row.postfitImpact!;
      expect(Math.abs(up!)).toBeGreaterThan(1e-3);
      expectClose(up, -down!, 2e-2);
      expectClose(row.prefitImpact!.up, -row.prefitImpact!.down!, 2e-2);
    }
  });

  it('match a conditional fit by full Newton at θ̂ ± σ̂ to 2e-3 relative (docs/likelihood.md §8 tolerances)', async () => {
    const m = syntheticModel('small', 3);
    const r = await fitModel(m, { impacts: 'full', expected: false });
    const problem = buildProblem(m, { dataset: 'observed', asimovMu: 1, controlOnly: false, excludeRegions: [] });
    const scratch = createScratch(problem);
    const s0 = startPoint(problem.model);
    const best = minimise(problem, s0.phi, s0.gamma, scratch);
    const c = curvatureAt(problem, best.phi, best.gamma, scratch);
    if (!c.ok) throw new Error(c.message);
    for (const name of ['syst0', 'syst5', 'syst11']) {
      const i = problem.model.names.indexOf(name);
      const row = r.nuisance.find((n) => n.name === name)!;
      const held = Uint8Array.from(problem.held);
      held[i] = 1;
      const phi = Float64Array.from(best.phi);
      phi[i] = best.phi[i] + row.constraint!;
      const direct = minimise({ ...problem, held }, phi, best.gamma, scratch);
      expect(direct.status).toBe('converged');
      expectClose(row.postfitImpact!.up, direct.phi[0] - best.phi[0], 2e-3, 1e-5);
    }
  });

  it('rank the parameters by their largest post-fit impact, and a one-member group has the quick impact as its grouped impact', async () => {
    const m = richModel();
    m.systematics.forEach((s, i) => (s.group = `g${i}`));
    const r = await fitModel(m, { impacts: 'full', expected: false });
    const ranked = r.nuisance.filter((n) => n.rank !== null).sort((a, b) => a.rank! - b.rank!);
    const size = (n: (typeof ranked)[number]) => Math.max(Math.abs(n.postfitImpact!.up!), Math.abs(n.postfitImpact!.down!));
    for (let k = 1; k < ranked.length; k++) expect(size(ranked[k - 1])).toBeGreaterThanOrEqual(size(ranked[k]));
    for (const g of r.groupedImpacts.filter((g) => g.parameters.length === 1)) {
      const row = r.nuisance.find((n) => n.name === g.parameters[0])!;
      expectClose(g.impact, Math.abs(row.quickImpact!), 1e-9, 1e-12);
    }
    const { error, stat, syst } = r.summary!.mu;
    expectClose(stat! ** 2 + syst! ** 2, error! ** 2, 1e-9);
  });
});

describe('intervals and limits', () => {
  it('finds the q = 1 crossings of a counting experiment where 2ΔNLL says, and a scan around μ̂', async () => {
    const [s, b, n] = [10, 50, 70];
    const r = await fitModel(countingModel({ s, b, n }), { scan: true, impacts: 'none', expected: false });
    const q = (mu: number) => 2 * (mu * s + b - n - n * Math.log((mu * s + b) / n));
    const { low, high } = r.summary!.mu.interval68!;
    expectClose(q(r.summary!.mu.value + low!), 1, 0, 1e-5);
    expectClose(q(r.summary!.mu.value + high!), 1, 0, 1e-5);
    expectClose(q(r.summary!.mu.value + r.summary!.mu.interval95!.high!), 3.8415, 0, 1e-3);
    expect(high!).toBeGreaterThan(-low!); // Poisson intervals are wider upwards
    for (const p of r.scan!.points) expectClose(p.q, q(p.value), 1e-6, 1e-8);
  });

  it('gives the CLs limit of a known-background counting experiment with n = b: q_μ,A = 2(μs − b ln(1 + μs/b)) = Φ⁻¹(0.975)² at the median (Cowan et al. 2011, expected limit σ·Φ⁻¹(1 − 0.05/2))', async () => {
    const [s, b] = [10, 100];
    const r = await fitModel(countingModel({ s, b, n: b }), { limit: true, impacts: 'none', expected: false });
    const limit = r.summary!.limit!;
    const qA = (mu: number) => 2 * (mu * s - b * Math.log(1 + (mu * s) / b));
    const target = normalQuantile(0.975) ** 2;
    let lo = 0;
    let hi = 10;
    for (let i = 0; i < 200; i++) ((qA((lo + hi) / 2) < target ? (lo = (lo + hi) / 2) : (hi = (lo + hi) / 2)));
    expectClose(limit.expected.median, lo, 1e-4);
    // With n = b the data are the background-only Asimov dataset: observed = expected median.
    expectClose(limit.observed, lo, 1e-4);
    const bands = [limit.expected.minus2, limit.expected.minus1, limit.expected.median, limit.expected.plus1, limit.expected.plus2];
    for (let k = 1; k < 5; k++) expect(bands[k]!).toBeGreaterThan(bands[k - 1]!);
  });

  it('approaches the Gaussian expected limit 1.96 √b / s for a large known background (Cowan et al. 2011)', async () => {
    const [s, b] = [100, 10000];
    const r = await fitModel(countingModel({ s, b, n: b }), { limit: true, impacts: 'none', expected: false });
    expectClose(r.summary!.limit!.expected.median, (1.96 * Math.sqrt(b)) / s, 0.01);
  });

  it('scans a nuisance parameter for the diagnosis panel with crossings near θ̂ ± σ̂', () => {
    const scan = scanParameter(richModel(), {}, 'syst1', 11);
    expect(scan.failure).toBeNull();
    expect(scan.points).toHaveLength(11);
    expectClose(scan.crossings68.high! - scan.bestFit, scan.error!, 0.1);
    expectClose(scan.bestFit - scan.crossings68.low!, scan.error!, 0.1);
  });
});

describe('awkward models', () => {
  it('reports two floating normalisations with indistinguishable effects as a failed fit naming both, with no NaN', async () => {
    const m = model({
      regions: [{ key: 'CR', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1, 2], observed: [100, 50] }],
      processes: [
        { key: 'a', kind: 'background' },
        { key: 'b', kind: 'background' },
      ],
      floatingNorms: [
        { key: 'ka', targets: [{ region: 'CR', process: 'a' }] },
        { key: 'kb', targets: [{ region: 'CR', process: 'b' }] },
      ],
      templates: [
        { region: 'CR', process: 'a', nominal: [60, 30] },
        { region: 'CR', process: 'b', nominal: [40, 20] },
      ],
    });
    const r = await fitModel(m, { impacts: 'full', scan: true, limit: true });
    expect(r.status).toBe('failed');
    expect(r.convergence.failure).toMatch(/ka/);
    expect(r.convergence.failure).toMatch(/kb/);
    expect(r.summary).toBeNull();
    expect(r.parameters).toEqual([]);
    expect(() => fitResultSchema.parse(JSON.parse(JSON.stringify(r)))).not.toThrow();
  });

  it('fits a model with an empty bin, a zero template and a systematic on it without NaN, holding what nothing depends on', async () => {
    const m = model({
      regions: [{ key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1, 2, 3], observed: [12, 0, 7] }],
      processes: [
        { key: 'sig', kind: 'signal' },
        { key: 'bkg', kind: 'background' },
        { key: 'ghost', kind: 'background' },
      ],
      templates: [
        { region: 'SR', process: 'sig', nominal: [2, 0, 3] },
        { region: 'SR', process: 'bkg', nominal: [10, 0, 4], variance: [1, 0, 0.5] },
        { region: 'SR', process: 'ghost', nominal: [0, 0, 0] },
      ],
      systematics: [
        { key: 'on_ghost', effects: [{ region: 'SR', process: 'ghost', kind: 'scale', up: 1.1, down: 0.9 }] },
        { key: 'on_bkg', effects: [{ region: 'SR', process: 'bkg', kind: 'scale', up: 1.1, down: 0.9 }] },
      ],
    });
    const r = await fitModel(m, { impacts: 'full', scan: true, limit: true });
    expect(r.status).toBe('converged');
    expect(r.parameters.find((p) => p.name === 'on_ghost')!.fixed).toBe(true);
    expect(r.convergence.warnings.join(' ')).toMatch(/on_ghost affects no bin/);
    expect(r.gammas.count).toBe(2);
    expect(JSON.stringify(r)).not.toMatch(/NaN|Infinity/);
    expect(() => fitResultSchema.parse(JSON.parse(JSON.stringify(r)))).not.toThrow();
  });

  it('holds the edge and names the bin when a shape variation clips a bin at zero at the minimum', async () => {
    // The down variation empties bin 1 of the background; the data there are 0, so the
    // likelihood prefers θ past the point where the yield hits zero.
    const m = model({
      regions: [{ key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1, 2], observed: [30, 0] }],
      processes: [
        { key: 'sig', kind: 'signal' },
        { key: 'bkg', kind: 'background' },
      ],
      templates: [
        { region: 'SR', process: 'sig', nominal: [5, 0] },
        { region: 'SR', process: 'bkg', nominal: [25, 3] },
      ],
      systematics: [{ key: 'tail', effects: [{ region: 'SR', process: 'bkg', kind: 'shape', up: [25, 9], down: [25, 0] }] }],
    });
    const r = await fitModel(m, { impacts: 'none' });
    expect(r.status).toBe('converged');
    expect(r.convergence.clippedBins).toEqual([{ region: 'SR', bin: 1, process: 'bkg' }]);
    expect(r.convergence.warnings.join(' ')).toMatch(/SR bin 1 \(bkg\)/);
    expect(JSON.stringify(r)).not.toMatch(/NaN|Infinity/);
  });

  it('holds μ and reports it fixed in a control-only fit, with no outputs that need μ', async () => {
    const r = await fitModel(countingModel({ s: 10, b: 50, n: 70, tau: 2, m: 110 }), { controlOnly: true, impacts: 'full', scan: true, limit: true });
    expect(r.status).toBe('converged');
    expect(r.model.regionsInFit).toEqual(['CR']);
    const mu = r.parameters.find((p) => p.name === 'mu')!;
    expect(mu).toMatchObject({ fixed: true, error: null, value: 1 });
    expect(r.summary!.mu.fixed).toBe(true);
    expect(r.summary!.discovery).toBeNull();
    expect(r.summary!.limit).toBeNull();
    expect(r.scan).toBeNull();
    expectClose(r.parameters.find((p) => p.name === 'k')!.value, 110 / 100, 0, 1e-6);
  });

  it('refuses an observed fit of a region without data, naming the region', async () => {
    const m = countingModel({ s: 1, b: 1, n: 1 });
    delete m.regions[0].observed;
    await expect(fitModel(m)).rejects.toThrow(FitInputError);
    await expect(fitModel(m)).rejects.toThrow(/region "SR" has no observed counts/);
    await expect(fitModel(m, { dataset: 'asimov' })).resolves.toMatchObject({ status: 'converged' });
  });
});

describe('progress and cancellation', () => {
  it('reports progress up to 1 and returns a result the API schema accepts', async () => {
    const seen: number[] = [];
    const r = await fitModel(syntheticModel('small', 2), { impacts: 'full', scan: true, limit: true }, { onProgress: (f) => seen.push(f) });
    expect(seen.at(-1)).toBe(1);
    for (let k = 1; k < seen.length; k++) expect(seen[k]).toBeGreaterThanOrEqual(seen[k - 1]);
    const parsed = fitResultSchema.parse(JSON.parse(JSON.stringify(r)));
    expect(parsed.summary!.limit!.observed).not.toBeNull();
    expect(parsed.yields.postfit!.length).toBe(3);
    expect(parsed.information.length).toBe(20);
  });

  it('rejects with FitCancelledError when the signal aborts during the refits', async () => {
    const controller = new AbortController();
    const run = fitModel(syntheticModel('small', 2), { impacts: 'full', scan: true }, {
      signal: controller.signal,
      onProgress: (f, stage) => stage === 'refits' && f > 0.4 && controller.abort(),
    });
    await expect(run).rejects.toBeInstanceOf(FitCancelledError);
  });
});
