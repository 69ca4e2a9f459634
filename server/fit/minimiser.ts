import type { FitProblem } from './compiled-model';
import { cholesky, choleskySolve } from './cholesky';
import { computeDerivatives, createDerivatives, type Derivatives } from './derivatives';
import { negativeLogLikelihood } from './likelihood';
import { createWorkspace, type Workspace } from './yields';

/**
 * Newton's method with bounds (MODEL.md §5): analytic gradient and γ-reduced Hessian, steps
 * solved by Cholesky on the (μ, k, θ) system, a backtracking (Armijo) line search along the
 * step projected onto the bounds, Levenberg damping when the Hessian is not positive
 * definite, and the stop on the Newton decrement gᵀH⁻¹g/2 < tolerance (Nocedal & Wright,
 * Numerical Optimization, 2nd ed., §3.1 and §3.4; the decrement as in Boyd & Vandenberghe,
 * Convex Optimization, §9.5). A parameter at a bound whose gradient points outwards is held
 * there for the step (active set).
 */

export interface Scratch {
  ws: Workspace;
  d: Derivatives;
  trialPhi: Float64Array;
  trialGamma: Float64Array;
  eliminate: Uint8Array;
}

export function createScratch(problem: FitProblem): Scratch {
  const m = problem.model;
  return {
    ws: createWorkspace(m),
    d: createDerivatives(m),
    trialPhi: new Float64Array(m.nDense),
    trialGamma: new Float64Array(m.nGamma),
    eliminate: new Uint8Array(m.nGamma),
  };
}

export interface MinimiseOptions {
  tolerance?: number;
  maxIterations?: number;
  /** Checked between iterations; an aborted signal ends the loop early (status 'cancelled'). */
  signal?: AbortSignal;
}

export type MinimiseStatus = 'converged' | 'edge' | 'failed' | 'cancelled';

export interface MinimiseResult {
  status: MinimiseStatus;
  phi: Float64Array;
  gamma: Float64Array;
  nll: number;
  iterations: number;
  decrement: number;
  /** Free dense parameters of the last Newton system (held and active-at-bound excluded). */
  free: Int32Array;
  /** Cholesky factor of H̃ over `free` at the final point, or null if not positive definite. */
  factor: Float64Array | null;
  /** Local index (into `free`) of the pivot that failed, or −1. */
  failedPivot: number;
  /** H̃ over `free` at the final point (row-major). */
  hessian: Float64Array;
  damped: boolean;
  message: string | null;
}

const BOUND_EPS = 1e-12;

export function minimise(problem: FitProblem, phi0: Float64Array, gamma0: Float64Array, scratch: Scratch, options: MinimiseOptions = {}): MinimiseResult {
  const { model: m, data, held, gammaHeld, globals } = problem;
  const tol = options.tolerance ?? 1e-9;
  const maxIt = options.maxIterations ?? 100;
  const P = m.nDense;
  const G = m.nGamma;
  const { ws, d, trialPhi, trialGamma, eliminate } = scratch;
  const phi = Float64Array.from(phi0);
  const gamma = Float64Array.from(gamma0);
  project(problem, phi, gamma);

  let nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
  const result = (status: MinimiseStatus, it: number, dec: number, free: Int32Array, fac: Float64Array | null, failedPivot: number, hess: Float64Array, damped: boolean, message: string | null): MinimiseResult => ({
    status, phi, gamma, nll, iterations: it, decrement: dec, free, factor: fac, failedPivot, hessian: hess, damped, message,
  });
  if (!Number.isFinite(nll)) {
    return result('failed', 0, NaN, new Int32Array(0), null, -1, new Float64Array(0), false, 'the starting point gives zero expected events in a bin with observed events');
  }

  const deltaPhi = new Float64Array(P);
  const deltaGamma = new Float64Array(G);
  let lastDec = Infinity;
  for (let it = 0; ; it++) {
    if (options.signal?.aborted) return result('cancelled', it, lastDec, new Int32Array(0), null, -1, new Float64Array(0), false, 'cancelled');
    // γ held outside the fit or active at a bound are not eliminated.
    let anyAtBound = false;
    for (let g = 0; g < G; g++) if (!gammaHeld[g] && (gamma[g] <= BOUND_EPS || gamma[g] >= 10 - BOUND_EPS)) anyAtBound = true;
    if (anyAtBound) computeDerivatives(m, data, phi, gamma, eliminate.fill(0), ws, d, false, false, globals);
    for (let g = 0; g < G; g++) {
      if (gammaHeld[g]) {
        eliminate[g] = 0;
        continue;
      }
      const atLow = anyAtBound && gamma[g] <= BOUND_EPS && d.gGamma[g] > 0;
      const atHigh = anyAtBound && gamma[g] >= 10 - BOUND_EPS && d.gGamma[g] < 0;
      eliminate[g] = atLow || atHigh ? 0 : 1;
    }
    computeDerivatives(m, data, phi, gamma, eliminate, ws, d, true, false, globals);

    // Free dense set: not held, not pressed against a bound.
    const freeList: number[] = [];
    for (let i = 0; i < P; i++) {
      if (held[i]) continue;
      const gi = d.g[i];
      if (phi[i] <= m.lower[i] + BOUND_EPS * (1 + Math.abs(m.lower[i])) && gi > 0) continue;
      if (phi[i] >= m.upper[i] - BOUND_EPS * (1 + Math.abs(m.upper[i])) && gi < 0) continue;
      freeList.push(i);
    }
    const free = Int32Array.from(freeList);
    const n = free.length;
    const Hf = new Float64Array(n * n);
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) Hf[a * n + b] = d.H[free[a] * P + free[b]];
    let { L, failedAt } = cholesky(Hf, n);
    const firstFailure = failedAt;
    let damped = false;
    if (failedAt >= 0) {
      // Levenberg damping: H + λ·diag(H) (+ a floor for zero diagonals), λ raised until positive definite.
      damped = true;
      let lambda = 1e-8;
      while (failedAt >= 0 && lambda < 1e12) {
        const Hd = Float64Array.from(Hf);
        for (let a = 0; a < n; a++) Hd[a * n + a] += lambda * (Math.abs(Hf[a * n + a]) + 1e-8);
        ({ L, failedAt } = cholesky(Hd, n));
        lambda *= 10;
      }
      if (failedAt >= 0) return result('failed', it, NaN, free, null, firstFailure, Hf, true, 'the Hessian could not be made positive definite');
    }
    // Newton step on the reduced system, then the eliminated γ.
    const step = new Float64Array(n);
    for (let a = 0; a < n; a++) step[a] = -d.gReduced[free[a]];
    choleskySolve(L, n, step);
    deltaPhi.fill(0);
    for (let a = 0; a < n; a++) deltaPhi[free[a]] = step[a];
    let dec = 0;
    for (let a = 0; a < n; a++) dec -= d.gReduced[free[a]] * step[a];
    deltaGamma.fill(0);
    for (let g = 0; g < G; g++) {
      if (!eliminate[g]) continue;
      const row = g * P;
      let s = d.gGamma[g];
      for (let a = 0; a < n; a++) s += d.Bt[row + free[a]] * step[a];
      deltaGamma[g] = -s / d.D[g];
      dec += (d.gGamma[g] * d.gGamma[g]) / d.D[g];
    }
    dec *= 0.5;
    lastDec = dec;
    const factor = firstFailure >= 0 ? null : L;
    if (dec < tol) return result('converged', it, dec, free, factor, firstFailure, Hf, damped, null);
    if (it >= maxIt) return result('failed', it, dec, free, factor, firstFailure, Hf, damped, `no convergence after ${maxIt} Newton iterations (decrement ${dec.toExponential(2)})`);

    // Backtracking line search on the projected path.
    let slope = 0;
    for (let i = 0; i < P; i++) slope += d.g[i] * deltaPhi[i];
    for (let g = 0; g < G; g++) slope += d.gGamma[g] * deltaGamma[g];
    let alpha = 1;
    let accepted = false;
    for (let ls = 0; ls < 50; ls++) {
      for (let i = 0; i < P; i++) trialPhi[i] = phi[i] + alpha * deltaPhi[i];
      for (let g = 0; g < G; g++) trialGamma[g] = gamma[g] + alpha * deltaGamma[g];
      project(problem, trialPhi, trialGamma);
      const trial = negativeLogLikelihood(m, data, gammaHeld, trialPhi, trialGamma, ws, globals);
      if (Number.isFinite(trial) && trial <= nll + 1e-4 * alpha * Math.min(slope, 0) + 1e-13 * (1 + Math.abs(nll))) {
        phi.set(trialPhi);
        gamma.set(trialGamma);
        const decrease = nll - trial;
        nll = trial;
        accepted = decrease > 0 || dec < 1e-6;
        break;
      }
      alpha *= 0.5;
    }
    if (!accepted) {
      // Restore the yields at the current point for the caller.
      nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
      if (hasClippedBins(problem, ws)) return result('edge', it, dec, free, factor, firstFailure, Hf, damped, null);
      if (dec < 1e-6) return result('converged', it, dec, free, factor, firstFailure, Hf, damped, `the decrement stopped at ${dec.toExponential(2)}, limited by rounding`);
      return result('failed', it, dec, free, factor, firstFailure, Hf, damped, `the line search could not lower the NLL (decrement ${dec.toExponential(2)})`);
    }
    if (it >= 40 && hasClippedBins(problem, ws)) {
      // Sitting on a clip edge: the stop on the decrement cannot be met there; hold the edge.
      nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
      return result('edge', it + 1, dec, free, factor, firstFailure, Hf, damped, null);
    }
  }
}

/** Clamps free parameters into their bounds and leaves held ones at their value. */
export function project(problem: FitProblem, phi: Float64Array, gamma: Float64Array): void {
  const m = problem.model;
  for (let i = 0; i < m.nDense; i++) {
    if (problem.held[i]) continue;
    if (phi[i] < m.lower[i]) phi[i] = m.lower[i];
    else if (phi[i] > m.upper[i]) phi[i] = m.upper[i];
  }
  for (let g = 0; g < m.nGamma; g++) {
    if (problem.gammaHeld[g]) continue;
    if (gamma[g] < 0) gamma[g] = 0;
    else if (gamma[g] > 10) gamma[g] = 10;
  }
}

/**
 * Sample-bins in the fit whose additive template is at or below zero (the clip is active), or,
 * with `edge` > 0, within that fraction of its nominal above zero (on the edge).
 */
export function clippedSampleBins(problem: FitProblem, ws: Workspace, edge = 0): { sample: number; bin: number }[] {
  const m = problem.model;
  const out: { sample: number; bin: number }[] = [];
  for (let s = 0; s < m.nSamples; s++) {
    if (!m.sampleInFit[s]) continue;
    const sb0 = m.sampleBinStart[s];
    for (let j = 0; j < m.sampleNBins[s]; j++) {
      const A = ws.A[sb0 + j];
      const nominal = m.nominal[sb0 + j];
      // A template that is zero at nominal and untouched is not a clip.
      if (A < 0 || (nominal > 0 && A <= edge * nominal)) out.push({ sample: s, bin: j });
    }
  }
  return out;
}

/** How close to zero, relative to the nominal, a template counts as sitting on the clip edge. */
export const EDGE_TOLERANCE = 1e-4;

function hasClippedBins(problem: FitProblem, ws: Workspace): boolean {
  return clippedSampleBins(problem, ws, EDGE_TOLERANCE).length > 0;
}
