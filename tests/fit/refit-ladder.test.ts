import { describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitModel, syntheticModel } from '../../server/fit';
import { resolveEdge } from '../../server/fit/clip-edge';
import { conditionalFit } from '../../server/fit/conditional-fit';
import { curvatureAt, type FitContext } from '../../server/fit/covariance';
import { gammaRoot } from '../../server/fit/gamma-profile';
import { negativeLogLikelihood } from '../../server/fit/likelihood';
import { createScratch, minimise } from '../../server/fit/minimiser';
import { negativeCurvature, newtonLoop } from '../../server/fit/newton';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { buildProblem, startPoint } from '../../server/fit/problem';
import { createRandom } from '../../server/fit/synthetic';
import { EDGE_SIZES, stressModel } from '../../server/fit/synthetic-stress';
import { expectClose } from './helpers';

const observed = { dataset: 'observed' as const, asimovMu: 1, controlOnly: false, excludeRegions: [] as string[] };

function contextOf(model: ReturnType<typeof syntheticModel>): FitContext {
  const problem = buildProblem(model, observed);
  const scratch = createScratch(problem);
  const s = startPoint(problem.model);
  const min = minimise(problem, s.phi, s.gamma, scratch);
  const c = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!c.ok) throw new Error(c.message);
  return c.context;
}

/** The Newton decrement ½ g̃ᵀH̃⁻¹g̃ at a point of the problem with φ_index held, from the analytic Hessian (no step taken). */
function trueDecrement(ctx: FitContext, index: number, phi: Float64Array, gamma: Float64Array): number {
  const held = Uint8Array.from(ctx.problem.held);
  held[index] = 1;
  return newtonLoop({ ...ctx.problem, held }, phi, gamma, createScratch(ctx.problem), { tolerance: 0, maxIterations: 0 }).decrement;
}

describe('the refit ladder', () => {
  it('stops a refit only where the Newton decrement of the analytic Hessian is below the main fit’s 1e-9 (docs/likelihood.md §5, §10)', () => {
    // On this model the quasi-Newton estimate gᵀMg/2 passed 1e-9 where the true decrement was up to 1.1e-9 and more.
    const ctx = contextOf(stressModel('small', 11));
    const m = ctx.problem.model;
    const P = m.nDense;
    let worst = 0;
    let refits = 0;
    for (let i = m.thetaStart; i < P; i++) {
      if (ctx.problem.held[i]) continue;
      const sigma = Math.sqrt(ctx.V[i * P + i]);
      for (const value of [ctx.phi[i] + sigma, ctx.phi[i] - sigma, ctx.phi[i] + 1]) {
        const r = conditionalFit(ctx, i, value, createScratch(ctx.problem));
        expect(r.ok).toBe(true);
        expect(r.decrement).toBeLessThanOrEqual(1e-9);
        worst = Math.max(worst, trueDecrement(ctx, i, r.phi, r.gamma));
        refits++;
      }
    }
    expect(refits).toBeGreaterThan(50);
    expect(worst).toBeLessThanOrEqual(1e-9);
  });

  it('goes down to Newton with a fresh Hessian when the warm steps cannot converge, and gives the same impacts', () => {
    const ctx = contextOf(syntheticModel('small', 3));
    const m = ctx.problem.model;
    const P = m.nDense;
    // A covariance of the wrong sign: the quasi-Newton direction climbs, and the warm rung gives up.
    const crippled: FitContext = { ...ctx, V: ctx.V.map((v) => -v) };
    for (const name of ['syst0', 'syst7', 'syst13']) {
      const i = m.names.indexOf(name);
      const value = ctx.phi[i] + Math.sqrt(ctx.V[i * P + i]);
      const good = conditionalFit(ctx, i, value, createScratch(ctx.problem));
      const ladder = conditionalFit(crippled, i, value, createScratch(ctx.problem));
      expect(good.rung).toBe('warm');
      expect(ladder.rung).toBe('newton');
      expectClose(ladder.phi[0] - ctx.phi[0], good.phi[0] - ctx.phi[0], 2e-3, 1e-5);
    }
  });

  it('reports every conditional fit of a result by its rung', async () => {
    const r = await fitModel(syntheticModel('small', 2), { impacts: 'full', scan: true, limit: true, expected: true });
    const refits = r.convergence.refits!;
    const free = r.nuisance.filter((n) => !n.fixed).length;
    // four impacts per parameter, 21 scan points less the one at μ̂ if any, crossings and limits on top
    expect(refits.warm + refits.newton + refits.cold).toBeGreaterThan(4 * free + 20);
    expect(refits.failed).toBe(0);
    expect(r.convergence.warnings.join(' ')).not.toMatch(/did not converge|failed on every rung/);
  });
});

describe('the clip edge', () => {
  /** One bin whose background's down variation empties it: at θ = −1 the template reaches zero. */
  const edgeModel = (tail: number, signalTail = 0) =>
    exchangeModelSchema.parse({
      format: 'plumbline.model',
      version: 1,
      name: 'edge',
      regions: [{ key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1, 2], observed: [30, tail] }],
      processes: [
        { key: 'sig', kind: 'signal' },
        { key: 'bkg', kind: 'background' },
      ],
      templates: [
        { region: 'SR', process: 'sig', nominal: [5, signalTail] },
        { region: 'SR', process: 'bkg', nominal: [25, 3] },
      ],
      systematics: [{ key: 'tail', effects: [{ region: 'SR', process: 'bkg', kind: 'shape', up: [25, 9], down: [25, 0] }] }],
    });

  it('holds the edge where leaving it raises the NLL: no events in the tail, θ = −1, μ = 1 and NLL = ½ (by hand)', async () => {
    // Bin 2: ν = 3 + I(θ; 6, −3) is 0 at θ = −1; with n = 0 its term is ν, so θ < −1 only adds
    // θ²/2 and θ > −1 adds ν > 0: the minimum sits on the edge. Bin 1: 5μ + 25 = 30 gives μ = 1.
    const r = await fitModel(edgeModel(0), { impacts: 'none', expected: false });
    expect(r.status).toBe('converged');
    expectClose(r.parameters[0].value, 1, 0, 1e-9);
    expectClose(r.parameters[1].value, -1, 0, 1e-9);
    expectClose(r.convergence.nll, 0.5, 0, 1e-9);
    expect(r.convergence.clipEdge).toMatchObject({ kept: 'held', heldNll: expect.closeTo(0.5, 9) });
  });

  it('releases an edge where leaving it lowers the NLL, and keeps the lower minimum', () => {
    // Eight events in the tail (and a little signal there, so that the edge is a possible point):
    // the data want the tail up, θ > 0, far from the edge at θ = −1.
    const problem = buildProblem(edgeModel(8, 1), observed);
    const scratch = createScratch(problem);
    const s = startPoint(problem.model);
    const free = minimise(problem, s.phi, s.gamma, scratch);
    expect(free.status).toBe('converged');
    expect(free.phi[1]).toBeGreaterThan(0);
    // A Newton loop stopped on the edge (as one that crawled along the kink would).
    const phi = Float64Array.from([1, -1]);
    const gamma = new Float64Array(problem.model.nGamma).fill(1);
    const nll = negativeLogLikelihood(problem.model, problem.data, problem.gammaHeld, phi, gamma, scratch.ws);
    const r = resolveEdge(problem, { status: 'edge', phi, gamma, nll, iterations: 0, decrement: 1, damped: false, message: null }, scratch, {});
    expect(r.status).toBe('converged');
    expect(r.edge).toMatchObject({ kept: 'released' });
    expect(r.edge!.releasedNll!).toBeLessThan(r.edge!.heldNll);
    expectClose(r.nll, free.nll, 1e-12, 1e-12);
    expectClose(r.phi[1], free.phi[1], 0, 1e-6);
  });
});

describe('a refit that takes a template across the clip edge', () => {
  it('also starts from the minimum and from the start values, and keeps the lowest minimum (the tail template held at zero makes a valley of its own)', () => {
    // A tail killer model: at np14 = θ̂ + σ̂ the path from the best fit clips two tail bins of a
    // background (A = 0 and −1.8 there) and stops in that valley, 0.16 above the minimum that
    // Newton from the start values reaches with np14 held.
    const ctx = contextOf(stressModel(EDGE_SIZES.small, 6));
    const m = ctx.problem.model;
    const i = m.names.indexOf('np14');
    const value = ctx.phi[i] + Math.sqrt(ctx.V[i * m.nDense + i]);
    const r = conditionalFit(ctx, i, value, createScratch(ctx.problem));
    expect(r.ok).toBe(true);
    const held = Uint8Array.from(ctx.problem.held);
    held[i] = 1;
    const s = startPoint(m);
    s.phi[i] = value;
    const cold = minimise({ ...ctx.problem, held }, s.phi, s.gamma, createScratch(ctx.problem));
    expect(cold.status).toBe('converged');
    expect(r.nll).toBeLessThanOrEqual(cold.nll + 1e-9);
    expect(trueDecrement(ctx, i, r.phi, r.gamma)).toBeLessThanOrEqual(1e-9);
  });
});

describe('γ profiled in closed form', () => {
  /** The NLL of one bin in γ (docs/likelihood.md §4: ν itself when n = 0, whatever its sign; +∞ for ν ≤ 0 when n > 0), minimised by golden section over [0, 10]. */
  function goldenSection(m: number, o: number, n: number, sigma: number, centre: number): number {
    const f = (g: number) => {
      const nu = m * g + o;
      const poisson = n > 0 ? (nu > 0 ? nu - n * Math.log(nu) : Infinity) : nu;
      return poisson + (g - centre) ** 2 / (2 * sigma * sigma);
    };
    let lo = m > 0 && n > 0 ? Math.max(0, -o / m) : 0;
    let hi = m < 0 && n > 0 ? Math.min(10, o / -m) : 10;
    for (let k = 0; k < 200; k++) {
      const a = lo + 0.381966 * (hi - lo);
      const b = lo + 0.618034 * (hi - lo);
      if (f(a) < f(b)) hi = b;
      else lo = a;
    }
    return (lo + hi) / 2;
  }

  it('is the minimum in γ for carrying yields of either sign and for empty bins (golden-section search; common practice, no source)', () => {
    const rand = createRandom(7);
    let cases = 0;
    for (let t = 0; t < 4000; t++) {
      const m = (rand() < 0.5 ? -1 : 1) * 20 * rand();
      const o = 50 * rand() - m * 3 * rand();
      const n = rand() < 0.2 ? 0 : Math.floor(60 * rand());
      const sigma = 0.01 + rand();
      const centre = 0.5 + rand();
      if (n > 0 && !(m * 10 + o > 0 || o > 0)) continue; // no γ in [0, 10] gives the bin a yield
      const f = (g: number) => (n > 0 ? m * g + o - n * Math.log(m * g + o) : m * g + o) + (g - centre) ** 2 / (2 * sigma * sigma);
      const ours = gammaRoot(m, o, n, sigma, centre);
      const reference = goldenSection(m, o, n, sigma, centre);
      expect(f(ours)).toBeLessThanOrEqual(f(reference) + 1e-9 * (1 + Math.abs(f(reference))));
      cases++;
    }
    expect(cases).toBeGreaterThan(3000);
  });

  it('gives the Conway root for a positive carrying yield (Conway, arXiv:1103.0354)', () => {
    // m γ² + (o − m + m² σ²) γ + (m σ² (o − n) − o) = 0 with m = 20, o = 30, n = 55, σ = 0.1
    const [m, o, n, s] = [20, 30, 55, 0.1];
    const b = o - m + m * m * s * s;
    const c = m * s * s * (o - n) - o;
    expectClose(gammaRoot(m, o, n, s), (-b + Math.sqrt(b * b - 4 * m * c)) / (2 * m), 1e-12);
  });
});

describe('the stress models of the suite', () => {
  it('have empty tail bins, one-sided, same-side and asymmetric variations, and control regions with many events', () => {
    const model = stressModel('small', 1);
    const emptyTail = model.templates.filter((t) => t.nominal.at(-1) === 0 && t.nominal[0] > 0).length;
    const effects = model.systematics.flatMap((s) => s.effects);
    const scale = effects.filter((e) => e.kind === 'scale');
    const oneSided = scale.filter((e) => e.up === 1 || e.down === 1).length;
    const sameSide = scale.filter((e) => (e.up - 1) * (e.down - 1) > 0).length;
    const asymmetric = scale.filter((e) => Math.abs(Math.log(e.up) + Math.log(e.down)) > 0.3 * Math.abs(Math.log(e.up) - Math.log(e.down))).length;
    const counts = (key: string) => model.regions.find((r) => r.key === key)!.observed!.reduce((a, b) => a + b, 0);
    expect(emptyTail).toBeGreaterThan(0);
    expect(oneSided).toBeGreaterThan(0);
    expect(sameSide).toBeGreaterThan(0);
    expect(asymmetric).toBeGreaterThan(0);
    expect(counts('CR1')).toBeGreaterThan(5 * counts('SR0'));
  });
});

describe('a minimum where the curvature is not that of a free interior point', () => {
  it('finds the direction of negative curvature of a symmetric matrix: the eigenvector of its lowest eigenvalue (ml-matrix as the reference)', () => {
    const rand = createRandom(5);
    for (let t = 0; t < 20; t++) {
      const n = 3 + Math.floor(8 * rand());
      // Q diag(λ) Qᵀ with one eigenvalue below zero
      const Q = new EigenvalueDecomposition(Matrix.rand(n, n, { random: rand }).add(Matrix.rand(n, n, { random: rand }).transpose()), { assumeSymmetric: true }).eigenvectorMatrix;
      const lambda = Array.from({ length: n }, (_, k) => (k === 0 ? -0.05 - rand() : 0.5 + 3 * rand()));
      const H = Q.mmul(Matrix.diag(lambda)).mmul(Q.transpose());
      const flat = Float64Array.from(H.to1DArray());
      const v = negativeCurvature(flat, n)!;
      expect(v).not.toBeNull();
      const lowest = Q.getColumn(0);
      const cos = Math.abs(lowest.reduce((a, x, k) => a + x * v[k], 0));
      expect(cos).toBeGreaterThan(1 - 1e-6);
    }
    // positive definite: none
    expect(negativeCurvature(Float64Array.from([2, 1, 1, 3]), 2)).toBeNull();
  });

  it('converges where the clip edge is held and the Hessian is indefinite off it, with a σ for every free parameter (the inverse on the edge)', async () => {
    for (const seed of [10, 13]) {
      const r = await fitModel(stressModel(EDGE_SIZES.tiny, seed), { impacts: 'none', expected: false });
      expect(r.status, r.convergence.failure ?? '').toBe('converged');
      expect(r.convergence.clipEdge?.kept).toBe('held');
      for (const p of r.parameters) if (!p.fixed) expect(p.error).toBeGreaterThan(0);
    }
  });

  it('holds a γ pressed against zero for the covariance, and says so, where freeing it leaves the Hessian indefinite', async () => {
    const r = await fitModel(stressModel(EDGE_SIZES.small, 10), { impacts: 'none', expected: false });
    expect(r.status, r.convergence.failure ?? '').toBe('converged');
    const held = r.gammas.list.filter((g) => g.atBound && g.error === null);
    expect(held.length).toBeGreaterThan(0);
    for (const g of held) expect(r.convergence.warnings.some((w) => w.startsWith(`${g.name} is at a bound`) && w.includes('holds it there'))).toBe(true);
  });
});
