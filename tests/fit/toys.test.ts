import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import { fitOptionsSchema } from '@shared/schemas/fit';
import { toySummarySchema } from '@shared/schemas/toys';
import { FitCancelledError, FitInputError, fitModel, syntheticModel } from '../../server/fit';
import type { FitProblem, GlobalObservables } from '../../server/fit/compiled-model';
import { conditionalFit } from '../../server/fit/conditional-fit';
import { curvatureAt } from '../../server/fit/covariance';
import { computeDerivatives, createDerivatives } from '../../server/fit/derivatives';
import { profileGammas } from '../../server/fit/gamma-profile';
import { negativeLogLikelihood } from '../../server/fit/likelihood';
import { createScratch, minimise } from '../../server/fit/minimiser';
import { threadEntry, workerPool } from '../../server/runs/threads/pool';
import { buildProblem, startPoint } from '../../server/fit/problem';
import { gaussian, poisson, toyRandom } from '../../server/fit/sampling';
import { createRandom } from '../../server/fit/synthetic';
import { prepareToys, runToys, summariseToys, type ToyOutcome, type ToyTask } from '../../server/fit/toys';
import { createWorkspace } from '../../server/fit/yields';
import { countingModel, expectClose } from './helpers';

/** jstat 1.9.6 (npm) ships a Poisson pmf; the project's type stub lists only what other tests use. */
const poissonPdf = (k: number, mean: number): number => (jStat as unknown as { poisson: { pdf(k: number, l: number): number } }).poisson.pdf(k, mean);

const options = fitOptionsSchema.parse({ impacts: 'none', expected: false });
const range = (from: number, to: number) => Array.from({ length: to - from }, (_, k) => from + k);

/** A model with scale and shape effects, two floating normalisations and template variances. */
function richProblem(): FitProblem {
  return buildProblem(syntheticModel({ regions: 3, signalRegions: 1, bins: 5, processes: 3, systematics: 6, floatingNorms: 2, varianceFraction: 0.7 }, 7), options);
}

function nominalGlobals(problem: FitProblem): GlobalObservables {
  return { theta: new Float64Array(problem.model.nDense), gamma: new Float64Array(problem.model.nGamma).fill(1) };
}

describe('global observables', () => {
  it('give bit-identical fits, covariances and refits when they sit at the nominal 0 and 1 as when they are left out', () => {
    const without = richProblem();
    const withNominal: FitProblem = { ...without, globals: nominalGlobals(without) };
    const fit = (p: FitProblem) => {
      const scratch = createScratch(p);
      const s = startPoint(p.model);
      const min = minimise(p, s.phi, s.gamma, scratch);
      const curvature = curvatureAt(p, min.phi, min.gamma, scratch);
      if (!curvature.ok) throw new Error(curvature.message);
      const atZero = conditionalFit(curvature.context, 0, 0, createScratch(p));
      return { phi: min.phi, gamma: min.gamma, nll: min.nll, iterations: min.iterations, V: curvature.context.V, q: [atZero.nll, ...atZero.phi, ...atZero.gamma] };
    };
    const a = fit(without);
    const b = fit(withNominal);
    // exact equality: x − 0 and γ − 1 are the same floating-point operations either way
    expect(b).toEqual(a);
  });

  it('move the gradient as a central finite difference of the NLL says (common practice, no source)', () => {
    const problem = richProblem();
    const m = problem.model;
    const rand = createRandom(99);
    const { phi, gamma } = startPoint(m);
    phi[0] = 0.7 + rand();
    for (let i = 1; i < m.thetaStart; i++) phi[i] = 0.8 + 0.4 * rand();
    for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 2.4 * (rand() - 0.5);
    for (let g = 0; g < m.nGamma; g++) gamma[g] = 0.9 + 0.2 * rand();
    const globals = nominalGlobals(problem);
    for (let i = m.thetaStart; i < m.nDense; i++) globals.theta[i] = 2 * (rand() - 0.5);
    for (let g = 0; g < m.nGamma; g++) globals.gamma[g] = 1 + 0.3 * (rand() - 0.5);

    const ws = createWorkspace(m);
    const nll = (x: Float64Array) => negativeLogLikelihood(m, problem.data, problem.gammaHeld, x.subarray(0, m.nDense), x.subarray(m.nDense), ws, globals);
    const d = createDerivatives(m);
    negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws, globals);
    computeDerivatives(m, problem.data, phi, gamma, new Uint8Array(m.nGamma).fill(1), ws, d, false, false, globals);
    const analytic = [...d.g, ...d.gGamma];
    const x = new Float64Array([...phi, ...gamma]);
    for (let i = 0; i < x.length; i++) {
      if (i >= m.nDense && problem.gammaHeld[i - m.nDense]) continue;
      const h = 1e-6;
      const up = Float64Array.from(x);
      const down = Float64Array.from(x);
      up[i] += h;
      down[i] -= h;
      expectClose(analytic[i], (nll(up) - nll(down)) / (2 * h), 1e-6, 1e-6);
    }
  });

  it('centre the closed-form γ profile: ∂NLL/∂γ vanishes at the profiled γ with shifted centres (Conway, arXiv:1103.0354)', () => {
    const problem = richProblem();
    const m = problem.model;
    const globals = nominalGlobals(problem);
    const rand = createRandom(5);
    for (let g = 0; g < m.nGamma; g++) globals.gamma[g] = 1 + 0.4 * (rand() - 0.5);
    const { phi, gamma } = startPoint(m);
    const ws = createWorkspace(m);
    const d = createDerivatives(m);
    profileGammas(m, problem.data, problem.gammaHeld, phi, gamma, ws, globals);
    computeDerivatives(m, problem.data, phi, gamma, new Uint8Array(m.nGamma), ws, d, false, false, globals);
    for (let g = 0; g < m.nGamma; g++) if (!problem.gammaHeld[g] && gamma[g] > 0) expectClose(d.gGamma[g], 0, 0, 1e-9);
  });
});

describe('random draws', () => {
  /**
   * χ² goodness of fit of N draws against a pmf: cells of consecutive k holding at least 20
   * expected draws each (tails included), p-value from jstat's χ² CDF with cells − 1 degrees
   * of freedom (Pearson's test; common practice, no source).
   */
  function poissonGoodnessOfFit(mean: number, draws: number[], pmf: (k: number) => number): number {
    const N = draws.length;
    const lo = Math.max(0, Math.floor(mean - 8 * Math.sqrt(mean) - 10));
    const hi = Math.ceil(mean + 8 * Math.sqrt(mean) + 10);
    const counts = new Map<number, number>();
    for (const k of draws) counts.set(k, (counts.get(k) ?? 0) + 1);
    const cells: { observed: number; expected: number }[] = [];
    let observed = 0;
    let expected = 0;
    let cdf = 0;
    for (let k = 0; k < lo; k++) observed += counts.get(k) ?? 0;
    for (let k = lo; k <= hi; k++) {
      const p = pmf(k);
      cdf += p;
      observed += counts.get(k) ?? 0;
      expected += N * p;
      if (expected >= 20) {
        cells.push({ observed, expected });
        observed = 0;
        expected = 0;
      }
    }
    for (const [k, c] of counts) if (k > hi) observed += c;
    // what lies outside [lo, hi] (below 1e-12 of the mass) goes to the last cell
    const last = cells[cells.length - 1];
    last.observed += observed;
    last.expected += expected + N * Math.max(0, 1 - cdf);
    const chi2 = cells.reduce((s, c) => s + (c.observed - c.expected) ** 2 / c.expected, 0);
    return 1 - jStat.chisquare.cdf(chi2, cells.length - 1);
  }

  for (const mean of [0.3, 4, 9.99, 10, 40, 400, 1e5]) {
    it(`draws Poisson counts of mean ${mean} that pass a χ² test against jstat's Poisson pmf (W. Hörmann, Insur. Math. Econ. 12 (1993) 39 above 10)`, () => {
      const rand = toyRandom(2024, Math.round(mean * 100));
      const draws = Array.from({ length: 20_000 }, () => poisson(rand, mean));
      // jstat's pmf λ^k e^−λ / k! overflows in double precision beyond k ≈ 170: there the same pmf
      // is taken in logs with jstat's ln Γ
      const pmf = mean < 100 ? (k: number) => poissonPdf(k, mean) : (k: number) => Math.exp(k * Math.log(mean) - mean - jStat.gammaln(k + 1));
      expect(poissonGoodnessOfFit(mean, draws, pmf)).toBeGreaterThan(1e-3);
      // mean and variance both equal the Poisson mean (within 4 standard errors)
      const m = draws.reduce((s, k) => s + k, 0) / draws.length;
      const v = draws.reduce((s, k) => s + (k - m) ** 2, 0) / (draws.length - 1);
      expectClose(m, mean, 0, 4 * Math.sqrt(mean / draws.length));
      expectClose(v, mean, 0, 4 * mean * Math.sqrt(2 / draws.length) + 4 * Math.sqrt(mean / draws.length));
    });
  }

  it('draws standard normals that pass a χ² test against jstat on 40 equiprobable cells (Box & Muller, Ann. Math. Statist. 29 (1958) 610)', () => {
    const rand = toyRandom(7, 3);
    const N = 40_000;
    const edges = range(1, 40).map((j) => jStat.normal.inv(j / 40, 0, 1));
    const counts = new Array<number>(40).fill(0);
    for (let i = 0; i < N; i++) {
      const z = gaussian(rand);
      let j = 0;
      while (j < 39 && z >= edges[j]) j++;
      counts[j]++;
    }
    const chi2 = counts.reduce((s, c) => s + (c - N / 40) ** 2 / (N / 40), 0);
    expect(1 - jStat.chisquare.cdf(chi2, 39)).toBeGreaterThan(1e-3);
  });

  it('gives each toy its own stream: the same seed and index repeat it, another index or seed does not', () => {
    const first = (seed: number, index: number) => {
      const r = toyRandom(seed, index);
      return [r(), r(), r()];
    };
    expect(first(1, 5)).toEqual(first(1, 5));
    expect(first(1, 6)).not.toEqual(first(1, 5));
    expect(first(2, 5)).not.toEqual(first(1, 5));
  });
});

describe('pseudo-experiments', () => {
  const small = syntheticModel('small');

  it('refits to the stored fit: the same μ̂, σ_μ and q0 as fitModel', async () => {
    const fit = await fitModel(small, options);
    const plan = prepareToys(small, options, { kind: 'best-fit' });
    expect(plan.bestFit.mu).toBe(fit.summary!.mu.value);
    expect(plan.sigmaMu).toBe(fit.summary!.mu.error);
    expect(plan.q0Observed).toBe(fit.summary!.discovery!.q0);
    expect(plan.generatedMu).toBe(plan.bestFit.mu);
    expect(plan.nuisance.map((p) => p.name)).toEqual(fit.nuisance.filter((n) => !n.fixed).map((n) => n.name));
    // plain JSON data: a plan survives a trip through JSON unchanged
    expect(JSON.parse(JSON.stringify(plan))).toEqual(plan);
  });

  it('draws the same toys however they are split into batches, in this thread and on worker threads', async () => {
    const plan = prepareToys(small, options, { kind: 'best-fit' });
    const all = runToys(small, options, plan, 11, range(0, 20));
    const split = [...runToys(small, options, plan, 11, range(0, 10)), ...runToys(small, options, plan, 11, range(10, 20))];
    expect(split).toEqual(all);
    expect(all.every((o) => o.ok)).toBe(true);
    expect(new Set(all.map((o) => o.mu)).size).toBe(20);

    const pool = workerPool(threadEntry('toy-batch.worker'), { minThreads: 2, maxThreads: 2, workerData: { niceness: 0 } });
    try {
      const task = (indices: number[]): ToyTask => ({ model: small, options, plan, seed: 11, indices, key: 'batching-test' });
      const batches = (await Promise.all([range(10, 20), range(0, 5), range(5, 10)].map((ix) => pool.run(task(ix))))) as ToyOutcome[][];
      expect([...batches[1], ...batches[2], ...batches[0]]).toEqual(all);
    } finally {
      await pool.destroy();
    }
  });

  it('reports progress after every toy and stops with FitCancelledError once its signal is aborted', () => {
    const plan = prepareToys(small, options, { kind: 'best-fit' });
    const seen: [number, number][] = [];
    runToys(small, options, plan, 1, range(0, 3), { onProgress: (done, total) => seen.push([done, total]) });
    expect(seen).toEqual([
      [1, 3],
      [2, 3],
      [3, 3],
    ]);
    const controller = new AbortController();
    controller.abort();
    expect(() => runToys(small, options, plan, 1, range(0, 3), { signal: controller.signal })).toThrow(FitCancelledError);
  });

  it('refuses a generation μ outside the range of μ, and a μ other than the best fit when μ is held', () => {
    expect(() => prepareToys(small, options, { kind: 'fixed-mu', mu: 25 })).toThrow(FitInputError);
    expect(() => prepareToys(small, fitOptionsSchema.parse({ ...options, controlOnly: true }), { kind: 'fixed-mu', mu: 1 })).toThrow(FitInputError);
    const heldMu = prepareToys(small, fitOptionsSchema.parse({ ...options, controlOnly: true }), { kind: 'best-fit' });
    expect(heldMu.mu).toBeNull();
    expect(heldMu.q0Defined).toBe(false);
  });

  describe('on a one-bin counting experiment, b = 100 with a 5 % normalisation uncertainty, drawn at μ = 0', () => {
    const model = countingModel(
      { s: 10, b: 100, n: 100 },
      { systematics: [{ key: 'bkg_norm', effects: [{ region: 'SR', process: 'bkg', kind: 'scale', up: 1.05, down: 0.95 }] }] },
    );
    const N = 4000;
    const plan = prepareToys(model, options, { kind: 'fixed-mu', mu: 0 });
    const outcomes = runToys(model, options, plan, 20_260_101, range(0, N));
    const q0 = outcomes.filter((o) => o.ok).map((o) => o.q0!);
    const summary = summariseToys(plan, outcomes, N);

    it('fits every toy', () => {
      expect(outcomes.every((o) => o.ok)).toBe(true);
      expect(q0.length).toBe(N);
    });

    it('gives q0 = 0 in about half the toys (Cowan et al., Eur. Phys. J. C 71 (2011) 1554, eq. 49: ½δ(q0) + ½χ²₁)', () => {
      // within 3 binomial standard errors; the Poisson counts shift it up by about
      // Φ(½/√(b + (0.05 b)²)) − ½ ≈ 0.018 at b = 100, which this band leaves room for
      const zero = q0.filter((q) => q === 0).length / N;
      expectClose(zero, 0.5, 0, 3 * Math.sqrt(0.25 / N));
      expect(summary.q0!.zeroFraction).toBe(zero);
      expect(summary.q0!.expectedZeroFraction).toBe(0.5);
    });

    it('gives P(q0 > 2.706) ≈ 0.05, the χ²₁ 90 % point halved (Cowan et al. 2011, eq. 49; 2.706 from jstat and the PDG χ² table)', () => {
      const q90 = jStat.chisquare.inv(0.9, 1);
      expectClose(q90, 2.706, 0, 5e-4);
      const tail = q0.filter((q) => q > q90).length / N;
      expectClose(tail, 0.05, 0, 3 * Math.sqrt((0.05 * 0.95) / N));
    });

    it('gives standardised μ̂ with mean 0 and width 1 within 3 standard errors (Cowan et al. 2011, Wald approximation, eq. 13)', () => {
      const mu = summary.mu!;
      expect(mu.n).toBe(N);
      expectClose(mu.mean, 0, 0, 3 * mu.meanError);
      expectClose(mu.sd, 1, 0, 3 * mu.sdError);
      expectClose(mu.meanError, mu.sd / Math.sqrt(N), 1e-12);
      expectClose(mu.sdError, mu.sd / Math.sqrt(2 * (N - 1)), 1e-12);
    });

    it('gives the asymptotic p-value of q0,obs at μ′ = 0 as ½ P(χ²₁ > q0,obs) by jstat, and the toy p-value as the fraction at or above it', () => {
      for (const observed of [0.4, 2.706, 3.2, 9]) {
        const s = summariseToys({ ...plan, q0Observed: observed }, outcomes, N);
        expectClose(s.q0!.asymptoticPValue, 0.5 * (1 - jStat.chisquare.cdf(observed, 1)), 1e-9);
        const k = q0.filter((q) => q >= observed).length;
        expect(s.q0!.toysAtOrAbove).toBe(k);
        expect(s.q0!.toyPValue).toBe(k / N);
        expectClose(s.q0!.toyPValueError, Math.sqrt(((k / N) * (1 - k / N)) / N), 1e-12);
      }
    });

    it('bins the q0 > 0 toys against the continuous part of the asymptotic distribution (Cowan et al. 2011, eq. 48)', () => {
      const h = summary.q0!.histogram;
      const positive = q0.filter((q) => q > 0).length;
      expect(h.counts.reduce((s, c) => s + c, 0) + h.below + h.above).toBe(positive);
      const expectedPositive = h.expected.reduce((s, e) => s + e, 0) + h.expectedBelow + h.expectedAbove;
      expectClose(expectedPositive, N / 2, 1e-9);
      // first bin [0, e1): N · ½ P(χ²₁ < e1)
      expectClose(h.expected[0], N * 0.5 * jStat.chisquare.cdf(h.edges[1], 1), 1e-9);
    });

    it('produces a summary the toy schema accepts', () => {
      expect(toySummarySchema.parse(summary)).toEqual(summary);
      expect(summary.converged).toBe(N);
      expect(summary.failed).toBe(0);
      expect(summary.generation).toEqual({ mu: 0, hypothesis: { kind: 'fixed-mu', mu: 0 } });
      expect(summary.pulls.map((p) => p.name)).toEqual(['bkg_norm']);
    });
  });

  describe('σ of the asymptotic q0 distribution from the Asimov dataset of the generation point (Cowan et al. 2011, §5: σ_A² = μ′²/q0,A)', () => {
    /** −2 ln λ(0) of one bin with n = μ′s + b and b known: 2[n ln(n/b) − n + b]; at μ′ = 1 Cowan et al. 2011, eq. 97. */
    const closedForm = (s: number, b: number, mu: number) => {
      const n = mu * s + b;
      return 2 * (n * Math.log(n / b) - n + b);
    };

    for (const { s, b, mu } of [
      { s: 10, b: 100, mu: 1 },
      { s: 30, b: 20, mu: 1 },
      { s: 10, b: 100, mu: 2.5 },
      { s: 10, b: 100, mu: -0.5 },
    ]) {
      it(`gives q0,A = 2[n ln(n/b) − n + b] on one bin with s = ${s}, b = ${b} drawn at μ′ = ${mu}${mu === 1 ? ' (eq. 97: 2[(s + b) ln(1 + s/b) − s])' : ''}`, () => {
        // the observed count sets the reference fit but not the generation point μ′
        const model = countingModel({ s, b, n: b + 3 });
        const plan = prepareToys(model, options, { kind: 'fixed-mu', mu });
        expect(plan.generatedMu).toBe(mu);
        const q0A = closedForm(s, b, mu);
        if (mu === 1) expectClose(q0A, 2 * ((s + b) * Math.log(1 + s / b) - s), 1e-12);
        expectClose(plan.q0Asimov!, q0A, 1e-6);
        expectClose(plan.sigmaQ0!, Math.abs(mu) / Math.sqrt(q0A), 1e-6);
        // the curvature σ_μ of the reference fit stays what standardises μ̂
        expect(plan.sigmaMu).toBeCloseTo(Math.sqrt(b + 3) / s, 6);
        expect(plan.warnings).toEqual([]);
      });
    }

    it('leaves σ to σ_μ at μ′ = 0, where q0 follows ½δ(q0) + ½χ²₁ whatever σ is', () => {
      const plan = prepareToys(countingModel({ s: 10, b: 100, n: 100 }), options, { kind: 'fixed-mu', mu: 0 });
      expect(plan.q0Asimov).toBeNull();
      expect(plan.sigmaQ0).toBe(plan.sigmaMu);
    });

    it('falls back to σ_μ for a plan stored before plans carried σ_A', () => {
      const model = countingModel({ s: 10, b: 100, n: 110 });
      const plan = prepareToys(model, options, { kind: 'best-fit' });
      const outcomes = runToys(model, options, plan, 5, range(0, 10));
      const { sigmaQ0: _s, q0Asimov: _q, ...stored } = plan;
      expect(summariseToys(stored as typeof plan, outcomes, 10).q0!.sigmaMu).toBe(plan.sigmaMu);
      expect(summariseToys(plan, outcomes, 10).q0!.sigmaMu).toBe(plan.sigmaQ0);
    });

    it('on the medium synthetic model drawn at the best fit, gives the toys\' p-value of q0,obs and the mean of √q0 (where σ_μ of the curvature does not)', () => {
      const medium = syntheticModel('medium');
      const N = 200;
      const plan = prepareToys(medium, options, { kind: 'best-fit' });
      expect(plan.warnings).toEqual([]);
      expect(plan.q0Asimov).not.toBeNull();
      // on this model √q0,obs ≈ 4.90 while μ̂/σ_μ ≈ 4.23: the likelihood is not parabolic between μ̂ and 0
      expect(plan.sigmaQ0!).toBeLessThan(0.9 * plan.sigmaMu!);
      const outcomes = runToys(medium, options, plan, 2026, range(0, N));
      expect(outcomes.every((o) => o.ok)).toBe(true);
      const summary = summariseToys(plan, outcomes, N);
      const q0 = summary.q0!;
      expect(q0.sigmaMu).toBe(plan.sigmaQ0);
      expect(q0.toyPValue).toBeGreaterThan(0);
      expect(q0.toyPValue).toBeLessThan(1);
      // binomial standard error of a fraction of N toys, at the asymptotic p and at the toys' p
      const error = (p: number) => Math.sqrt((p * (1 - p)) / N);
      const combined = Math.hypot(error(q0.asymptoticPValue!), q0.toyPValueError!);
      expectClose(q0.toyPValue!, q0.asymptoticPValue!, 0, 3 * combined);
      expect(summary.warnings.some((w) => w.includes('differs from the asymptotic'))).toBe(false);
      // √q0 of the toys ~ N(μ′/σ, 1) (Cowan et al. 2011, eq. 48; the q0 = 0 part is Φ(−μ′/σ) ≈ 0 here)
      const roots = outcomes.map((o) => Math.sqrt(o.q0!));
      const mean = roots.reduce((a, x) => a + x, 0) / N;
      const sd = Math.sqrt(roots.reduce((a, x) => a + (x - mean) ** 2, 0) / (N - 1));
      expectClose(mean, plan.generatedMu / plan.sigmaQ0!, 0, 3 * (sd / Math.sqrt(N)));
      // the same toys compared with σ = σ_μ fail both checks
      const withCurvature = summariseToys({ ...plan, sigmaQ0: plan.sigmaMu }, outcomes, N).q0!;
      expect(Math.abs(withCurvature.toyPValue! - withCurvature.asymptoticPValue!)).toBeGreaterThan(3 * Math.hypot(error(withCurvature.asymptoticPValue!), withCurvature.toyPValueError!));
      expect(Math.abs(mean - plan.generatedMu / plan.sigmaMu!)).toBeGreaterThan(3 * (sd / Math.sqrt(N)));
    });
  });

  it('summarises failed, missing and too few toys in a form the schema accepts, with warnings', () => {
    const plan = prepareToys(small, options, { kind: 'best-fit' });
    const outcomes = runToys(small, options, plan, 3, range(0, 12));
    outcomes[4] = { index: 4, ok: false, mu: null, q0: null, theta: [], message: 'the fit failed: test' };
    const summary = toySummarySchema.parse(summariseToys(plan, outcomes, 15));
    expect(summary.failed).toBe(1);
    expect(summary.converged).toBe(11);
    expect(summary.failures).toEqual([{ index: 4, message: 'the fit failed: test' }]);
    expect(summary.warnings.some((w) => w.includes('did not run'))).toBe(true);
    expect(summary.warnings.some((w) => w.includes('failed to converge'))).toBe(true);
    const none = toySummarySchema.parse(summariseToys(plan, [], 10));
    expect(none.mu!.n).toBe(0);
    expect(none.q0!.toyPValue).toBeNull();
  });
});
