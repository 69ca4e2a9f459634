import type { FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import { minimise, type Scratch } from './minimiser';
import { startPoint } from './problem';
import { warmRefit } from './warm-refit';

/**
 * A conditional fit: one parameter fixed at a value, all else refitted (impacts, scans, q0,
 * limits, the reference fits of toys). Each fit climbs a ladder until a rung meets the main
 * fit's stop test, the Newton decrement ½gᵀH⁻¹g ≤ tolerance (MODEL.md §9, last paragraph):
 *  1. warm: quasi-Newton from the linear response φ̂ + V[:,i]Δ/V_ii (or the same step from a
 *     nearby conditional minimum when a root search or the pre-fit impact moves the value a
 *     little), with a stop checked on the true Hessian (warm-refit.ts);
 *  2. newton: Newton with bounds and a fresh Hessian from where the first rung stands;
 *  3. cold: Newton with bounds from the context's minimum with the parameter held, and if that
 *     fails too, from the model's start values.
 * An output is left empty only when all three fail.
 */
export type Rung = 'warm' | 'newton' | 'cold';

export interface RefitWork {
  /** Quasi-Newton and checked Newton steps of the warm rung. */
  steps: number;
  normalisationSteps: number;
  /** Gradient evaluations, including the Hessian-vector products of the stop test. */
  gradients: number;
  /** Hessian-vector products of the stop test. */
  products: number;
  /** Iterations of Newton with a fresh Hessian (rungs 2 and 3). */
  newtonIterations: number;
}

export interface ConditionalResult {
  ok: boolean;
  nll: number;
  phi: Float64Array;
  gamma: Float64Array;
  /** The rung that met the stop test, or null when every rung failed. */
  rung: Rung | null;
  /** Newton decrement where the stop test was met (NaN when failed). */
  decrement: number;
  work: RefitWork;
  message: string | null;
}

const MAX_STEPS = 40;

/** A conditional minimum already found for the same parameter, to start a nearby one from. */
export interface WarmStart {
  value: number;
  phi: Float64Array;
  gamma: Float64Array;
}

export function conditionalFit(ctx: FitContext, index: number, value: number, scratch: Scratch, tolerance = 1e-9, warm: WarmStart | null = null): ConditionalResult {
  const { problem, V } = ctx;
  const m = problem.model;
  const P = m.nDense;
  const conditional: FitProblem = { ...problem, held: Uint8Array.from(problem.held) };
  conditional.held[index] = 1;
  const idx = Int32Array.from([...ctx.free].filter((p) => p !== index));
  const n = idx.length;

  // From the minimum, or from a nearby conditional minimum, along V[:,i].
  const phi = Float64Array.from(warm ? warm.phi : ctx.phi);
  const gamma = Float64Array.from(warm ? warm.gamma : ctx.gamma);
  const Vii = V[index * P + index];
  const delta = value - (warm ? warm.value : ctx.phi[index]);
  for (let a = 0; a < n; a++) phi[idx[a]] += (V[idx[a] * P + index] * delta) / Vii;
  phi[index] = value;
  return ladder(ctx, conditional, idx, index, value, phi, gamma, scratch, tolerance, MAX_STEPS);
}

/**
 * A fit of the context's problem with nothing more held, from (φ, γ) near its minimum (a
 * pseudo-experiment drawn around it): the same ladder, with V as the first inverse Hessian.
 */
export function quasiNewtonFit(ctx: FitContext, phi0: Float64Array, gamma0: Float64Array, scratch: Scratch, tolerance = 1e-9, maxSteps = MAX_STEPS): ConditionalResult {
  return ladder(ctx, ctx.problem, ctx.free, -1, NaN, Float64Array.from(phi0), Float64Array.from(gamma0), scratch, tolerance, maxSteps);
}

function ladder(
  ctx: FitContext,
  conditional: FitProblem,
  idx: Int32Array,
  index: number,
  value: number,
  phi: Float64Array,
  gamma: Float64Array,
  scratch: Scratch,
  tolerance: number,
  maxSteps: number,
): ConditionalResult {
  const m = ctx.problem.model;
  const w = warmRefit(ctx, conditional, idx, index, phi, gamma, scratch, tolerance, maxSteps);
  const work: RefitWork = { steps: w.steps, normalisationSteps: w.normalisationSteps, gradients: w.gradients, products: w.products, newtonIterations: 0 };
  if (w.ok) return { ok: true, nll: w.nll, phi, gamma, rung: 'warm', decrement: w.decrement, work, message: null };

  const newton = (rung: Rung, phi0: Float64Array, gamma0: Float64Array): ConditionalResult | null => {
    const start = Float64Array.from(phi0);
    for (let i = 0; i < m.nDense; i++) start[i] = Math.min(m.upper[i], Math.max(m.lower[i], start[i]));
    if (index >= 0) start[index] = value;
    const r = minimise(conditional, start, gamma0, scratch, { tolerance });
    work.newtonIterations += r.iterations;
    work.gradients += r.iterations + 1;
    if (r.status !== 'converged' && r.status !== 'edge') return null;
    return { ok: true, nll: r.nll, phi: r.phi, gamma: r.gamma, rung, decrement: r.decrement, work, message: r.message };
  };
  const fromHere = newton('newton', phi, gamma);
  if (fromHere) return fromHere;
  const fromMinimum = newton('cold', ctx.phi, ctx.gamma);
  if (fromMinimum) return fromMinimum;
  const s = startPoint(m);
  const fromStart = newton('cold', s.phi, s.gamma);
  if (fromStart) return fromStart;
  return { ok: false, nll: NaN, phi, gamma, rung: null, decrement: NaN, work, message: `no rung converged (warm: ${w.message ?? 'failed'})` };
}
