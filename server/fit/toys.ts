import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import { toyHypothesisSchema, type ToyHypothesis } from '@shared/schemas/toys';
import type { FitProblem, GlobalObservables } from './compiled-model';
import { conditionalFit, quasiNewtonFit } from './conditional-fit';
import { curvatureAt, type FitContext } from './covariance';
import { FitCancelledError, FitInputError } from './errors';
import { Refitter } from './refit-tasks';
import { negativeLogLikelihood } from './likelihood';
import { createScratch, minimise, type Scratch } from './minimiser';
import { buildProblem, startPoint } from './problem';
import { gaussian, poisson, toyRandom } from './sampling';
import { evaluateYields } from './yields';

export { summariseToys } from './toy-summary';

/**
 * Pseudo-experiments of a fit (shared/schemas/toys.ts): prepareToys refits the data once and
 * fixes where the toys are drawn from; runToys draws and fits any set of toys by index;
 * summariseToys turns the outcomes into the distributions the review screen shows. Plans and
 * outcomes are plain JSON data, so batches can run on worker threads or other machines.
 */

/** A parameter whose toy distribution is reported. */
export interface ToyParameter {
  name: string;
  kind: 'poi' | 'nuisance';
  /** Dense index in the compiled model. */
  index: number;
  /** Its value at the generation point. */
  generated: number;
  /** σ of the reference fit (curvature at its minimum). */
  referenceError: number;
}

export interface ToyPlan {
  hypothesis: ToyHypothesis;
  /** Size of the fit problem, checked again when the toys are run. */
  problem: { nDense: number; nGamma: number; nBins: number };
  /** μ is fitted (not held). */
  muFree: boolean;
  /** q0 is computed per toy: μ free and μ = 0 inside its range. */
  q0Defined: boolean;
  /** The reference fit: μ̂ and its NLL at the minimum. */
  bestFit: { mu: number; nll: number };
  /**
   * σ_μ of the reference fit, from the curvature at its minimum (null when μ is held). It
   * standardises μ̂ in the toys, (μ̂ − μ′)/σ_μ, as the pulls use their own reference σ's.
   */
  sigmaMu: number | null;
  /**
   * σ in the asymptotic distribution of q0 for data drawn at μ′, F(q0|μ′) = Φ(√q0 − μ′/σ)
   * (null where q0 is not defined). At μ′ ≠ 0 it is σ_A = |μ′|/√q0,A from the Asimov dataset
   * of the generation point (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554,
   * §5), not the curvature σ_μ of the reference fit: the two differ where the likelihood is
   * not parabolic between μ′ and 0. At μ′ = 0 the distribution is ½δ(q0) + ½χ²₁ whatever σ is,
   * and this is σ_μ; it is σ_μ too when the Asimov fit failed (with a warning).
   */
  sigmaQ0: number | null;
  /**
   * q0,A: −2 ln λ(0) on the Asimov dataset of the generation point (data = ν there, global
   * observables = the generated θ and γ), not set to 0 for μ′ < 0. Null at μ′ = 0, where q0 is
   * not defined, or when its fit with μ held at 0 failed.
   */
  q0Asimov: number | null;
  /** μ′, the μ the toys are drawn at. */
  generatedMu: number;
  /** q0 of the reference fit; null where it is not defined or its conditional fit failed. */
  q0Observed: number | null;
  /** μ (when free) and the free nuisance parameters, in the order of ToyOutcome.theta. */
  mu: ToyParameter | null;
  nuisance: ToyParameter[];
  /** The generation point: all dense parameters and all γ. */
  generation: { phi: number[]; gamma: number[] };
  /** Notes for the summary (a reference number that could not be computed, …). */
  warnings: string[];
}

export interface ToyOutcome {
  index: number;
  /** Both the fit and (where q0 is defined) the fit with μ held at 0 converged. */
  ok: boolean;
  mu: number | null;
  q0: number | null;
  /** Fitted values of the plan's nuisance parameters, in plan order (empty when the fit failed). */
  theta: number[];
  message: string | null;
}

/** A batch of toys as a worker receives it. */
export interface ToyTask {
  model: ExchangeModel;
  options: FitOptions;
  plan: ToyPlan;
  seed: number;
  indices: number[];
  /** Optional name of (model, options, plan), so a worker can recognise them without comparing them. */
  key?: string;
}

export interface ToyControl {
  signal?: AbortSignal;
  /** Called after every toy with the toys done and the toys in the call. */
  onProgress?: (done: number, total: number) => void;
}

type FitProblemInput = Pick<FitOptions, 'dataset' | 'asimovMu' | 'controlOnly' | 'excludeRegions'>;

/**
 * Refits the fit's own problem from the same start as fitModel (so the minimum is the stored
 * fit's), takes the reference σ's from the curvature there and q0 the way fitModel does, and
 * finds the generation point. Throws FitInputError when there is nothing to draw from.
 */
export function prepareToys(model: ExchangeModel, options: FitProblemInput, hypothesisInput: ToyHypothesis): ToyPlan {
  const hypothesis = toyHypothesisSchema.parse(hypothesisInput);
  const problem = buildProblem(model, options);
  const m = problem.model;
  const P = m.nDense;
  const scratch = createScratch(problem);
  const start = startPoint(m);
  const min = minimise(problem, start.phi, start.gamma, scratch);
  if (min.status === 'failed' || min.status === 'cancelled') {
    throw new FitInputError(`the fit does not converge (${min.message ?? 'no minimum'}), so there is no best fit to draw pseudo-experiments from`);
  }
  const curvature = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!curvature.ok) throw new FitInputError(`the fit has no covariance at its minimum, so toys have no reference errors: ${curvature.message}`);
  const ctx = curvature.context;
  const warnings: string[] = [];
  if (min.status === 'edge') warnings.push('The reference fit sits on the edge where an expected yield is clipped at zero; toys drawn near it may fail or pile up there.');

  const muFree = !problem.held[0];
  const q0Defined = muFree && m.lower[0] <= 0 && m.upper[0] >= 0;
  const sigma = (i: number) => Math.sqrt(ctx.V[i * P + i]);

  // q0 of the reference fit, through the same refit task as fitModel.
  let q0Observed: number | null = null;
  if (q0Defined) {
    if (ctx.phi[0] > 0) {
      const r = new Refitter([ctx]).run({ kind: 'fix', context: 0, index: 0, value: 0 });
      if (r.ok && r.nll !== null) q0Observed = Math.max(0, 2 * (r.nll - ctx.nll));
      else warnings.push(`The reference fit with μ held at 0 did not converge (${r.message ?? 'no minimum'}): the observed q0 and the toy p-value are not available.`);
    } else q0Observed = 0;
  }

  // Generation point.
  let phi = ctx.phi;
  let gamma = ctx.gamma;
  if (hypothesis.kind === 'fixed-mu') {
    const value = hypothesis.mu;
    if (!muFree) throw new FitInputError('μ is held in this fit, so toys cannot be drawn at another μ; draw them at the best fit', ['hypothesis', 'mu']);
    if (!(value >= m.lower[0] && value <= m.upper[0])) {
      throw new FitInputError(`μ = ${value} lies outside the range of μ, [${m.lower[0]}, ${m.upper[0]}]`, ['hypothesis', 'mu']);
    }
    if (value !== ctx.phi[0]) {
      const r = conditionalFit(ctx, 0, value, createScratch(problem));
      if (!r.ok) throw new FitInputError(`the fit with μ held at ${value} does not converge (${r.message ?? 'no minimum'}), so there is no point to draw toys from`, ['hypothesis', 'mu']);
      phi = r.phi;
      gamma = r.gamma;
    }
  }

  // σ of the asymptotic q0 distribution at the generation point (see ToyPlan.sigmaQ0).
  let sigmaQ0: number | null = null;
  let q0Asimov: number | null = null;
  if (q0Defined) {
    sigmaQ0 = sigma(0);
    if (phi[0] !== 0) {
      const a = asimovQ0(problem, phi, gamma, createScratch(problem));
      if (a.ok && a.q0 > 0) {
        q0Asimov = a.q0;
        sigmaQ0 = Math.abs(phi[0]) / Math.sqrt(a.q0);
      } else {
        warnings.push(
          `On the Asimov dataset of the generation point, ${a.ok ? 'μ = 0 is as likely as μ′' : `the fit with μ held at 0 did not converge (${a.message})`}: the asymptotic distribution of q0 uses σ_μ of the reference fit (curvature) instead of σ_A, and may describe the toys less well at μ′ = ${fmt(phi[0])}.`,
        );
      }
    }
  }

  const parameter = (i: number, kind: ToyParameter['kind']): ToyParameter => ({ name: m.names[i], kind, index: i, generated: phi[i], referenceError: sigma(i) });
  const nuisance: ToyParameter[] = [];
  for (let i = m.thetaStart; i < P; i++) if (!problem.held[i]) nuisance.push(parameter(i, 'nuisance'));
  return {
    hypothesis,
    problem: { nDense: P, nGamma: m.nGamma, nBins: m.nBins },
    muFree,
    q0Defined,
    bestFit: { mu: ctx.phi[0], nll: ctx.nll },
    sigmaMu: muFree ? sigma(0) : null,
    sigmaQ0,
    q0Asimov,
    generatedMu: phi[0],
    q0Observed,
    mu: muFree ? parameter(0, 'poi') : null,
    nuisance,
    generation: { phi: Array.from(phi), gamma: Array.from(gamma) },
    warnings,
  };
}

/**
 * The Asimov dataset of a generation point (Cowan et al. 2011, §5): every bin in the fit at
 * its expected yield there (zero outside the fit, where the likelihood does not look), and the
 * global observables at the generated θ and γ. Its free minimum is the generation point itself,
 * with every Poisson term at n = ν and every constraint at its centre. The curvature there is
 * the context a toy's fits start from (null when it is not positive definite).
 */
function generationAsimov(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch): { asimov: FitProblem; reference: FitContext | null } {
  const m = problem.model;
  evaluateYields(m, phi, gamma, scratch.ws);
  const expected = new Float64Array(m.nBins);
  for (let b = 0; b < m.nBins; b++) if (m.binInFit[b]) expected[b] = scratch.ws.nu[b];
  const asimov: FitProblem = { ...problem, data: expected, globals: { theta: Float64Array.from(phi), gamma: Float64Array.from(gamma) } };
  const curvature = curvatureAt(asimov, phi, gamma, scratch);
  return { asimov, reference: curvature.ok ? curvature.context : null };
}

/**
 * The fit with μ held at 0 of a toy's problem, from the toy's minimum `best`: a conditional fit
 * with the curvature of the expected likelihood at the generation point, or Newton throughout
 * without it (see createToyFitter).
 */
function fitMuAtZero(
  atZero: FitProblem,
  toyContext: FitContext | null,
  best: { phi: Float64Array; gamma: Float64Array },
  scratch: Scratch,
  signal?: AbortSignal,
): { ok: true; phi: Float64Array; gamma: Float64Array; nll: number } | { ok: false; message: string } {
  if (!toyContext) {
    const phi = Float64Array.from(best.phi);
    phi[0] = 0;
    const r = minimise(atZero, phi, best.gamma, scratch, { signal });
    if (r.status === 'cancelled') throw new FitCancelledError();
    return r.status !== 'failed' ? { ok: true, phi: r.phi, gamma: r.gamma, nll: r.nll } : { ok: false, message: r.message ?? 'no minimum' };
  }
  const r = conditionalFit({ ...toyContext, phi: best.phi, gamma: best.gamma }, 0, 0, scratch);
  return r.ok ? { ok: true, phi: r.phi, gamma: r.gamma, nll: r.nll } : { ok: false, message: r.message ?? 'no minimum' };
}

/**
 * q0,A = 2 (NLL(μ = 0) − NLL(generation point)) on the Asimov dataset of the generation point
 * (φ, γ): the q0 of a toy that drew exactly the expected counts and global observables, by the
 * same fit as a toy's q0 from its minimum, which for this dataset is the generation point.
 * Its NLL there is the saturated one (each bin at n = ν, each constraint at its centre).
 * Not truncated to 0 for μ′ < 0: −2 ln λ(0) is what gives σ_A² = μ′²/q0,A.
 */
export function asimovQ0(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch = createScratch(problem)): { ok: true; q0: number } | { ok: false; message: string } {
  const { asimov, reference } = generationAsimov(problem, phi, gamma, scratch);
  const atZero: FitProblem = { ...asimov, held: Uint8Array.from(problem.held) };
  atZero.held[0] = 1;
  const nllGeneration = reference ? reference.nll : negativeLogLikelihood(problem.model, asimov.data, problem.gammaHeld, phi, gamma, scratch.ws, asimov.globals);
  const fixed = fitMuAtZero(atZero, reference, { phi, gamma }, scratch);
  if (!fixed.ok) return fixed;
  return { ok: true, q0: Math.max(0, 2 * (fixed.nll - nllGeneration)) };
}

/**
 * Quasi-Newton steps a toy's fit may take before Newton takes over: a toy's minimum lies
 * further from the generation point than a refit's from the minimum, and in timings on the
 * synthetic models more steps cost less than an earlier switch to Newton.
 */
const TOY_STEPS = 80;

/** Draws and fits toys; the problem, its workspaces and the yields at the generation point are made once. */
export interface ToyFitter {
  run(seed: number, indices: readonly number[], control?: ToyControl): ToyOutcome[];
}

/**
 * A toy's minimum lies near the generation point, where the curvature of the expected
 * likelihood (the Asimov dataset n = ν there, constraints centred there) is the same for every
 * toy and computed once. Its inverse is the first inverse Hessian of quasi-Newton steps
 * (conditional-fit.ts): from the generation point for the toy's fit, and along the linear
 * response from the toy's minimum for the fit with μ held at 0; Newton with bounds takes over
 * where those steps stall, so a toy converges to the same stop as a fit of the data, mostly
 * without a Hessian of its own. Without that curvature (not positive definite), both fits are
 * Newton throughout.
 */
export function createToyFitter(model: ExchangeModel, options: FitProblemInput, plan: ToyPlan): ToyFitter {
  const problem = buildProblem(model, options);
  const m = problem.model;
  const P = m.nDense;
  const G = m.nGamma;
  if (plan.problem.nDense !== P || plan.problem.nGamma !== G || plan.problem.nBins !== m.nBins || plan.generation.phi.length !== P || plan.generation.gamma.length !== G) {
    throw new FitInputError('the toy plan was made for another model or other fit options');
  }
  for (const p of [...(plan.mu ? [plan.mu] : []), ...plan.nuisance]) {
    if (m.names[p.index] !== p.name || problem.held[p.index]) throw new FitInputError(`the toy plan's parameter ${p.name} does not match the model`);
  }
  const genPhi = Float64Array.from(plan.generation.phi);
  const genGamma = Float64Array.from(plan.generation.gamma);
  const scratch = createScratch(problem);
  // The yields and the curvature of the expected likelihood at the generation point.
  const { asimov, reference } = generationAsimov(problem, genPhi, genGamma, scratch);
  const expected = asimov.data;
  const inFit: number[] = [];
  for (let b = 0; b < m.nBins; b++) if (m.binInFit[b]) inFit.push(b);
  const freeTheta: number[] = [];
  for (let i = m.thetaStart; i < P; i++) if (!problem.held[i]) freeTheta.push(i);
  const freeGamma: number[] = [];
  for (let g = 0; g < G; g++) if (!problem.gammaHeld[g]) freeGamma.push(g);

  // One dataset and one set of global observables, overwritten by every toy.
  const globals: GlobalObservables = { theta: new Float64Array(P), gamma: new Float64Array(G).fill(1) };
  const toy: FitProblem = { ...problem, data: new Float64Array(m.nBins), globals };
  const atZero: FitProblem = { ...toy, held: Uint8Array.from(problem.held) };
  atZero.held[0] = 1;
  const toyContext: FitContext | null = reference && { ...reference, problem: toy };
  const nuisance = plan.nuisance.map((p) => p.index);

  function draw(seed: number, index: number): void {
    const rand = toyRandom(seed, index);
    for (const b of inFit) toy.data[b] = poisson(rand, expected[b]);
    for (const i of freeTheta) globals.theta[i] = genPhi[i] + gaussian(rand);
    for (const g of freeGamma) globals.gamma[g] = genGamma[g] + m.gammaSigma[g] * gaussian(rand);
  }

  type Fitted = { ok: true; phi: Float64Array; gamma: Float64Array; nll: number } | { ok: false; message: string };
  const fitted = (r: { ok: boolean; phi: Float64Array; gamma: Float64Array; nll: number; message: string | null }): Fitted =>
    r.ok ? { ok: true, phi: r.phi, gamma: r.gamma, nll: r.nll } : { ok: false, message: r.message ?? 'no minimum' };
  const newton = (p: FitProblem, phi: Float64Array, gamma: Float64Array, signal: AbortSignal | undefined): Fitted => {
    const r = minimise(p, phi, gamma, scratch, { signal });
    if (r.status === 'cancelled') throw new FitCancelledError();
    return fitted({ ...r, ok: r.status !== 'failed' });
  };

  function fit(signal: AbortSignal | undefined): Fitted {
    if (!toyContext) return newton(toy, genPhi, genGamma, signal);
    return fitted(quasiNewtonFit(toyContext, genPhi, genGamma, scratch, 1e-9, TOY_STEPS));
  }

  function one(seed: number, index: number, signal: AbortSignal | undefined): ToyOutcome {
    draw(seed, index);
    const best = fit(signal);
    if (!best.ok) return { index, ok: false, mu: null, q0: null, theta: [], message: `the fit failed: ${best.message}` };
    const mu = plan.muFree ? best.phi[0] : null;
    const theta = nuisance.map((i) => best.phi[i]);
    if (!plan.q0Defined || mu === null) return { index, ok: true, mu, q0: null, theta, message: null };
    if (!(mu > 0)) return { index, ok: true, mu, q0: 0, theta, message: null };
    const fixed = fitMuAtZero(atZero, toyContext, best, scratch, signal);
    if (!fixed.ok) return { index, ok: false, mu, q0: null, theta, message: `the fit with μ held at 0 failed: ${fixed.message}` };
    return { index, ok: true, mu, q0: Math.max(0, 2 * (fixed.nll - best.nll)), theta, message: null };
  }

  return {
    run(seed, indices, control = {}) {
      const { signal, onProgress } = control;
      const out: ToyOutcome[] = [];
      for (const index of indices) {
        if (signal?.aborted) throw new FitCancelledError();
        out.push(one(seed, index, signal));
        onProgress?.(out.length, indices.length);
      }
      return out;
    },
  };
}

/** Draws and fits the toys `indices` of the run seeded `seed` (builds the problem once for the call). */
export function runToys(model: ExchangeModel, options: FitProblemInput, plan: ToyPlan, seed: number, indices: readonly number[], control: ToyControl = {}): ToyOutcome[] {
  return createToyFitter(model, options, plan).run(seed, indices, control);
}

/** A worker's batch of toys, with the fitter made for its model, options and plan (a worker keeps fitters between batches). */
export function runToyTask(task: ToyTask, fitter: ToyFitter = createToyFitter(task.model, task.options, task.plan)): ToyOutcome[] {
  return fitter.run(task.seed, task.indices);
}

function fmt(x: number): string {
  return Number(x.toPrecision(3)).toString();
}
