import { Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { computeDerivatives, createDerivatives } from '../../server/fit/derivatives';
import { negativeLogLikelihood } from '../../server/fit/likelihood';
import { buildProblem, startPoint } from '../../server/fit/problem';
import { createRandom, syntheticModel } from '../../server/fit/synthetic';
import { stressModel } from '../../server/fit/synthetic-stress';
import { createWorkspace } from '../../server/fit/yields';
import { expectClose } from './helpers';
import { referenceGammas, referenceNll, type ReferencePoint } from './reference-nll';
import type { CompiledModel } from '../../server/fit/compiled-model';

const options = { dataset: 'observed' as const, asimovMu: 1, controlOnly: false, excludeRegions: [] };

/** A random point: θ in [−1.6, 1.6] so both sides of the interpolation's ±1 seams are used. */
function randomSetup(seed: number) {
  const problem = buildProblem(syntheticModel({ regions: 3, signalRegions: 1, bins: 5, processes: 3, systematics: 6, floatingNorms: 1, varianceFraction: 0.7 }, seed), options);
  const m = problem.model;
  const rand = createRandom(seed + 100);
  const { phi, gamma } = startPoint(m);
  phi[0] = 0.5 + rand();
  for (let i = 1; i < m.thetaStart; i++) phi[i] = 0.8 + 0.4 * rand();
  for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 3.2 * (rand() - 0.5);
  for (let g = 0; g < m.nGamma; g++) gamma[g] = 0.9 + 0.2 * rand();
  return { problem, m, phi, gamma };
}

/** Full point x = (φ, γ) ↦ NLL. */
function nllAt(setup: { m: CompiledModel; problem: ReturnType<typeof buildProblem> }, x: Float64Array): number {
  const { m, problem } = setup;
  const ws = createWorkspace(m);
  return negativeLogLikelihood(m, problem.data, problem.gammaHeld, x.subarray(0, m.nDense), x.subarray(m.nDense), ws);
}

/** ∂f/∂x_i by a central difference with step h (common practice, no source). */
function centralDifference(f: (x: Float64Array) => number, x: Float64Array, i: number, h = 1e-6): number {
  const xp = Float64Array.from(x);
  const xm = Float64Array.from(x);
  xp[i] += h;
  xm[i] -= h;
  return (f(xp) - f(xm)) / (2 * h);
}

/** The engine's analytic gradient over the full point x = (φ, γ). */
function gradientAt(setup: { m: CompiledModel; problem: ReturnType<typeof buildProblem> }, x: Float64Array): Float64Array {
  const { m, problem } = setup;
  const ws = createWorkspace(m);
  const d = createDerivatives(m);
  const phi = Float64Array.from(x.subarray(0, m.nDense));
  const gamma = Float64Array.from(x.subarray(m.nDense));
  negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws);
  computeDerivatives(m, problem.data, phi, gamma, new Uint8Array(m.nGamma).fill(1), ws, d, false);
  const out = new Float64Array(x.length);
  out.set(d.g);
  out.set(d.gGamma, m.nDense);
  return out;
}

describe('analytic derivatives', () => {
  for (const seed of [3, 11, 29]) {
    it(`match central finite differences of the NLL on random model ${seed} (gradient; common practice, no source)`, () => {
      const setup = randomSetup(seed);
      const x = new Float64Array([...setup.phi, ...setup.gamma]);
      const g = gradientAt(setup, x);
      for (let i = 0; i < x.length; i++) expectClose(g[i], centralDifference((v) => nllAt(setup, v), x, i), 1e-6, 1e-6);
    });

    it(`give the γ-eliminated Hessian equal to the Schur complement of the finite-difference Hessian (random model ${seed})`, () => {
      const setup = randomSetup(seed);
      const { m, problem, phi, gamma } = setup;
      const P = m.nDense;
      const N = P + m.nGamma;
      const x = new Float64Array([...phi, ...gamma]);
      // Full Hessian by central differences of the analytic gradient.
      const full = Matrix.zeros(N, N);
      for (let i = 0; i < N; i++) {
        const h = 1e-5;
        const xp = Float64Array.from(x);
        const xm = Float64Array.from(x);
        xp[i] += h;
        xm[i] -= h;
        const gp = gradientAt(setup, xp);
        const gm = gradientAt(setup, xm);
        for (let j = 0; j < N; j++) full.set(j, i, (gp[j] - gm[j]) / (2 * h));
      }
      const Hpp = full.subMatrix(0, P - 1, 0, P - 1);
      const Hpg = full.subMatrix(0, P - 1, P, N - 1);
      const Hgg = full.subMatrix(P, N - 1, P, N - 1);
      // The γ block is diagonal: each γ touches one bin.
      for (let a = 0; a < m.nGamma; a++) for (let b = 0; b < m.nGamma; b++) if (a !== b) expect(Math.abs(Hgg.get(a, b))).toBeLessThan(1e-4);
      const Dinv = Matrix.zeros(m.nGamma, m.nGamma);
      for (let a = 0; a < m.nGamma; a++) Dinv.set(a, a, 1 / Hgg.get(a, a));
      const schur = Hpp.sub(Hpg.mmul(Dinv).mmul(Hpg.transpose()));

      const ws = createWorkspace(m);
      const d = createDerivatives(m);
      negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws);
      computeDerivatives(m, problem.data, phi, gamma, new Uint8Array(m.nGamma).fill(1), ws, d, true);
      for (let i = 0; i < P; i++) for (let j = 0; j < P; j++) expectClose(d.H[i * P + j], schur.get(i, j), 1e-5, 1e-4);
      for (let a = 0; a < m.nGamma; a++) expectClose(d.D[a], Hgg.get(a, a), 1e-5, 1e-4);
    });
  }
});

/** The engine's point (φ, γ) by name, for the reference NLL. */
function byName(m: CompiledModel, phi: Float64Array, gamma: Float64Array): ReferencePoint {
  const p: ReferencePoint = { mu: phi[0], norms: {}, theta: {}, gamma: {} };
  for (let i = 1; i < m.thetaStart; i++) p.norms[m.names[i]] = phi[i];
  for (let i = m.thetaStart; i < m.nDense; i++) p.theta[m.names[i]] = phi[i];
  for (let g = 0; g < m.nGamma; g++) {
    const bin = m.gammaBin[g];
    const r = m.regions[m.binRegion[bin]];
    p.gamma[`${r.key}:${bin - r.firstBin}`] = gamma[g];
  }
  return p;
}

describe('the NLL against a reference written from docs/likelihood.md §1–4 on the exchange model (tests/fit/reference-nll.ts)', () => {
  for (const [seed, shapeScale] of [
    [5, 1],
    [8, 1],
    [13, 6],
    [21, 12],
  ] as const) {
    it(`agrees at random points on both sides of θ = ±1, with shape variations ×${shapeScale} (random model ${seed})`, () => {
      const model = syntheticModel({ regions: 4, signalRegions: 2, bins: 7, processes: 4, systematics: 30, floatingNorms: 2, varianceFraction: 0.6 }, seed);
      // larger shape variations drive some templates through zero, where the yield is clipped
      const nominal = (region: string, process: string) => model.templates.find((t) => t.region === region && t.process === process)!.nominal;
      for (const syst of model.systematics)
        for (const e of syst.effects)
          if (e.kind === 'shape') {
            const n0 = nominal(e.region, e.process);
            e.up = e.up.map((u, b) => n0[b] + shapeScale * (u - n0[b]));
            e.down = e.down.map((d, b) => n0[b] + shapeScale * (d - n0[b]));
          }
      const problem = buildProblem(model, options);
      const m = problem.model;
      // the same bins carry a γ, with the same σ
      const gammas = referenceGammas(model);
      expect(m.nGamma).toBe(gammas.size);
      const rand = createRandom(seed + 7);
      let clipped = 0;
      for (let trial = 0; trial < 6; trial++) {
        const { phi, gamma } = startPoint(m);
        phi[0] = 0.3 + rand();
        for (let i = 1; i < m.thetaStart; i++) phi[i] = 0.7 + 0.6 * rand();
        for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 3.2 * (rand() - 0.5);
        for (let g = 0; g < m.nGamma; g++) gamma[g] = 0.8 + 0.4 * rand();
        const ws = createWorkspace(m);
        const engine = negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws);
        for (let k = 0; k < ws.A.length; k++) if (ws.A[k] <= 0) clipped++;
        const reference = referenceNll(model, byName(m, phi, gamma));
        if (!Number.isFinite(reference)) expect(engine).toBe(Infinity);
        else expectClose(engine, reference, 1e-10, 1e-9);
      }
      if (shapeScale > 6) expect(clipped).toBeGreaterThan(0);
    });
  }
});

describe('the γ-reduced Hessian with clipped templates and some γ held', () => {
  /**
   * Random models whose templates carry scale and shape effects of the same θ, some γ held
   * (not eliminated), and shape variations scaled up until some templates are clipped at zero.
   */
  function stressSetup(seed: number, shapeScale: number) {
    const model = syntheticModel({ regions: 4, signalRegions: 2, bins: 7, processes: 4, systematics: 30, floatingNorms: 2, varianceFraction: 0.6 }, seed);
    // A third of the systematics act in the first region only, so regions differ in the parameters they touch.
    model.systematics.forEach((syst, i) => {
      if (i % 3 === 0) syst.effects = syst.effects.filter((e) => e.region === model.regions[0].key);
    });
    const problem = buildProblem(model, options);
    const m = problem.model;
    for (let k = 0; k < m.shapeHd.length; k++) {
      m.shapeHd[k] *= shapeScale;
      m.shapeHs[k] *= shapeScale;
    }
    const rand = createRandom(seed + 7);
    const { phi, gamma } = startPoint(m);
    phi[0] = seed % 2 === 0 ? 0 : 0.3 + rand();
    for (let i = 1; i < m.thetaStart; i++) phi[i] = 0.7 + 0.6 * rand();
    for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 3.2 * (rand() - 0.5);
    for (let g = 0; g < m.nGamma; g++) gamma[g] = 0.8 + 0.4 * rand();
    const eliminate = new Uint8Array(m.nGamma);
    for (let g = 0; g < m.nGamma; g++) eliminate[g] = rand() < 0.8 ? 1 : 0;
    return { problem, m, phi, gamma, eliminate };
  }

  for (const [seed, shapeScale] of [
    [5, 1],
    [8, 1],
    [13, 25],
    [21, 40],
  ] as const) {
    it(`equals the Schur complement, over the free γ, of the finite-difference Hessian (random model ${seed}, shape effects ×${shapeScale})`, () => {
      const setup = stressSetup(seed, shapeScale);
      const { problem, m, phi, gamma, eliminate } = setup;
      const P = m.nDense;
      const N = P + m.nGamma;
      const ws = createWorkspace(m);
      negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws);
      let clipped = 0;
      for (let k = 0; k < ws.A.length; k++) if (ws.A[k] <= 0) clipped++;
      if (shapeScale > 1) expect(clipped).toBeGreaterThan(0);
      expect(m.regions.some((r) => r.inFit && r.parameters.length < m.nDense)).toBe(true);

      const d = createDerivatives(m);
      computeDerivatives(m, problem.data, phi, gamma, eliminate, ws, d, true, true);

      // central differences of the gradient; a clipped template stays clipped within h (its A is well below 0)
      const x = new Float64Array([...phi, ...gamma]);
      const full = Matrix.zeros(N, N);
      const h = 1e-6;
      for (let i = 0; i < N; i++) {
        const xp = Float64Array.from(x);
        const xm = Float64Array.from(x);
        xp[i] += h;
        xm[i] -= h;
        const gp = gradientAt(setup, xp);
        const gm = gradientAt(setup, xm);
        for (let j = 0; j < N; j++) full.set(j, i, (gp[j] - gm[j]) / (2 * h));
      }
      const g0 = gradientAt(setup, x); // itself held to finite differences of the NLL above
      const free = [...Array(m.nGamma).keys()].filter((g) => eliminate[g]);
      const scale = (i: number, j: number) => Math.sqrt(Math.abs(full.get(i, i) * full.get(j, j)));
      for (let i = 0; i < P; i++) {
        for (let j = 0; j < P; j++) {
          let schur = 0;
          for (const g of free) schur += (full.get(i, P + g) * full.get(j, P + g)) / full.get(P + g, P + g);
          expectClose(d.H[i * P + j], full.get(i, j) - schur, 0, 2e-5 * scale(i, j) + 1e-6);
          expectClose(d.schur![i * P + j], schur, 0, 2e-5 * scale(i, j) + 1e-6);
        }
        let reduced = g0[i];
        for (const g of free) reduced -= (full.get(i, P + g) * g0[P + g]) / full.get(P + g, P + g);
        expectClose(d.gReduced[i], reduced, 1e-6, 1e-6 * Math.sqrt(Math.abs(full.get(i, i))));
      }
      for (const g of free) {
        expectClose(d.D[g], full.get(P + g, P + g), 1e-5, 1e-6);
        for (let i = 0; i < P; i++) expectClose(d.Bt[g * P + i], full.get(i, P + g), 1e-5, 1e-6 * Math.sqrt(Math.abs(full.get(i, i) * full.get(P + g, P + g))) + 1e-7);
      }
    });
  }
});

describe('an empty bin whose expected yield a negative μ takes below zero', () => {
  // docs/likelihood.md §4: with n = 0 the Poisson term is ν itself, whatever its sign. Its value
  // and its derivatives must agree there: a term held at zero below ν = 0 while the gradient
  // keeps slope 1 made Newton's line search stall at ν = 0 (the refit-agreement suite's μ < 0 crossings).
  it('has the NLL of the reference (reference-nll.ts) and a gradient that matches finite differences', () => {
    // the last bin of the first signal region: signal only, and no events
    const model = stressModel('small', 3);
    const region = model.regions.find((r) => r.role === 'signal')!;
    const observed = region.observed!;
    const last = observed.length - 1;
    observed[last] = 0;
    for (const t of model.templates) if (t.region === region.key && t.process !== 'signal') t.nominal[last] = 0;
    for (const syst of model.systematics)
      for (const e of syst.effects)
        if (e.region === region.key && e.process !== 'signal' && e.kind === 'shape') {
          e.up[last] = 0;
          e.down[last] = 0;
        }
    const problem = buildProblem(model, options);
    const m = problem.model;
    const rand = createRandom(17);
    let negativeEmpty = 0;
    for (let trial = 0; trial < 8; trial++) {
      const { phi, gamma } = startPoint(m);
      phi[0] = -0.2 - 0.5 * rand();
      for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 0.6 * (rand() - 0.5);
      const ws = createWorkspace(m);
      const engine = negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws);
      for (let b = 0; b < m.nBins; b++) if (m.binInFit[b] && problem.data[b] === 0 && ws.nu[b] < 0) negativeEmpty++;
      const reference = referenceNll(model, byName(m, phi, gamma));
      if (!Number.isFinite(reference)) {
        expect(engine).toBe(Infinity);
        continue;
      }
      expectClose(engine, reference, 1e-10, 1e-9);
      const setup = { m, problem };
      const x = new Float64Array([...phi, ...gamma]);
      const g = gradientAt(setup, x);
      for (const i of [0, m.thetaStart, m.nDense - 1]) expectClose(g[i], centralDifference((v) => nllAt(setup, v), x, i), 1e-6, 1e-6);
    }
    expect(negativeEmpty).toBeGreaterThan(0);
  });
});
