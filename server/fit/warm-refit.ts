import type { FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import { cholesky, choleskySolve } from './cholesky';
import { computeDerivatives, normalisationHessian } from './derivatives';
import { profileGammas } from './gamma-profile';
import { constraintSum, poissonSum } from './likelihood';
import type { Scratch } from './minimiser';
import { newtonCheck } from './newton-check';

/**
 * The first rung of a conditional fit: quasi-Newton steps from a point near the context's
 * minimum, on F(φ) = min_γ NLL(φ, γ) with γ profiled in closed form. F's Hessian at the minimum
 * is the Schur complement already inverted in V.
 *  - Settle the unconstrained normalisations (μ, k) first, by Newton on their own small block
 *    of the Hessian at the current point. A yield is k·exp(Σ I(θ)): when θ_i moves, the k that
 *    keeps the well-measured yields in place follows a curve, not the straight line of the
 *    linear response. Off that curve the gradient points across a narrow valley whose walls
 *    have turned with the move; stepping with the minimum's Hessian then throws the weakly
 *    constrained directions far off.
 *  - Step with the inverse Hessian known at the minimum (with the fixed parameter's row and
 *    column taken out: V − V[:,i] V[i,:] / V_ii), refined by BFGS from the steps taken (Nocedal
 *    & Wright, Numerical Optimization, 2nd ed., §6.1), applied in product form (the two-loop
 *    recursion, §7.2, keeping every pair).
 *  - Stop only on the true Newton decrement. When the quasi-Newton estimate gᵀMg/2 falls below
 *    the tolerance, the true step −H⁻¹g and decrement are computed by conjugate gradients with
 *    Hessian-vector products (newton-check.ts). Below the tolerance, that step is taken as the
 *    final one; above it, it is taken as a Newton step and checked again from the new point.
 * The caller moves to the next rung when this one fails: a step leaves the bounds, the line
 * search cannot lower F, the steps run out, or a direction of negative curvature turns up.
 */
export interface WarmOutcome {
  ok: boolean;
  nll: number;
  /** The true Newton decrement where the stop test was met (NaN when it was not). */
  decrement: number;
  steps: number;
  normalisationSteps: number;
  gradients: number;
  /** Hessian-vector products of the stop test. */
  products: number;
  message: string | null;
}

/** Rounds of the checked Newton finish before the next rung takes over. */
const CHECK_ROUNDS = 4;
/** Largest move of a difference for a Hessian-vector product, in units of each parameter's σ at the minimum. */
const DIFFERENCE_STEP = 1e-6;

/**
 * Works on φ and γ in place over the free indices `idx` of `conditional` (the context's problem
 * with the fixed parameter, if any, held at its value in φ).
 */
export function warmRefit(
  ctx: FitContext,
  conditional: FitProblem,
  idx: Int32Array,
  fixedIndex: number,
  phi: Float64Array,
  gamma: Float64Array,
  scratch: Scratch,
  tolerance: number,
  maxSteps: number,
  /** F at (φ, γ) when the scratch's yields are already those of that point (saves one evaluation). */
  startF = NaN,
): WarmOutcome {
  const { problem, V } = ctx;
  const m = problem.model;
  const P = m.nDense;
  const n = idx.length;
  const work = { steps: 0, normalisationSteps: 0, gradients: 0, products: 0 };
  const outcome = (ok: boolean, nll: number, decrement: number, message: string | null): WarmOutcome => ({ ok, nll, decrement, message, ...work });
  if (outOfBounds(conditional, phi)) return outcome(false, NaN, NaN, 'the start lies outside the bounds');

  const { ws, d, trialPhi, trialGamma } = scratch;
  const profiled = (p: Float64Array, g: Float64Array) => profiledNll(problem, p, g, scratch);
  const gradient = (p: Float64Array, g: Float64Array, out: Float64Array | null) => {
    work.gradients++;
    computeDerivatives(m, problem.data, p, g, ctx.eliminate, ws, d, false, false, problem.globals);
    if (out) for (let a = 0; a < n; a++) out[a] = d.g[idx[a]];
  };

  let F = Number.isFinite(startF) ? startF : profiled(phi, gamma);
  if (!Number.isFinite(F)) return outcome(false, F, NaN, 'the start gives zero expected events in a bin with observed events');
  const norm = settleNormalisations(ctx, conditional, idx, phi, gamma, scratch, tolerance, F, profiled, gradient);
  F = norm.F;
  work.normalisationSteps = norm.steps;

  // Inverse Hessian H₀ = V − V[:,i] V[i,:] / V_ii over the free set, refined by BFGS pairs.
  const vi = new Float64Array(n);
  if (fixedIndex >= 0) {
    const Vii = V[fixedIndex * P + fixedIndex];
    for (let a = 0; a < n; a++) vi[a] = V[idx[a] * P + fixedIndex] / Vii;
  }
  // x is scattered into all P dense parameters (zero where held, V's rows there are zero too),
  // so that each row of V is read contiguously: no index lookup in the n² loop.
  const xFull = new Float64Array(P);
  const applyH0 = (x: Float64Array, out: Float64Array) => {
    for (let a = 0; a < n; a++) xFull[idx[a]] = x[a];
    let vx = 0;
    if (fixedIndex >= 0) vx = rowTimes(V, fixedIndex * P, xFull, P);
    for (let a = 0; a < n; a++) {
      const acc = rowTimes(V, idx[a] * P, xFull, P);
      out[a] = fixedIndex >= 0 ? acc - vi[a] * vx : acc;
    }
  };
  const pairs: { s: Float64Array; y: Float64Array; rho: number }[] = [];
  const coef: number[] = [];
  const qv = new Float64Array(n);
  const applyM = (x: Float64Array, out: Float64Array) => {
    qv.set(x);
    for (let k = pairs.length - 1; k >= 0; k--) {
      const { s: sk, y: yk, rho } = pairs[k];
      let a = 0;
      for (let t = 0; t < n; t++) a += sk[t] * qv[t];
      a *= rho;
      coef[k] = a;
      for (let t = 0; t < n; t++) qv[t] -= a * yk[t];
    }
    applyH0(qv, out);
    for (let k = 0; k < pairs.length; k++) {
      const { s: sk, y: yk, rho } = pairs[k];
      let b = 0;
      for (let t = 0; t < n; t++) b += yk[t] * out[t];
      b *= rho;
      for (let t = 0; t < n; t++) out[t] += (coef[k] - b) * sk[t];
    }
  };
  const addPair = (s: Float64Array, gOld: Float64Array, gNew: Float64Array) => {
    const yk = new Float64Array(n);
    let sy = 0;
    for (let a = 0; a < n; a++) {
      yk[a] = gNew[a] - gOld[a];
      sy += s[a] * yk[a];
    }
    if (sy > 0) pairs.push({ s: Float64Array.from(s), y: yk, rho: 1 / sy });
  };

  // Backtracking on F along a step (Armijo, c = 1e-4 of the predicted decrease 2·dec).
  // Outside the box counts as a failed trial: shorter steps may stay inside.
  const lineSearch = (step: Float64Array, dec: number): number => {
    let alpha = 1;
    for (let ls = 0; ls < 10; ls++) {
      trialPhi.set(phi);
      for (let a = 0; a < n; a++) trialPhi[idx[a]] += alpha * step[a];
      if (!outOfBounds(conditional, trialPhi)) {
        trialGamma.set(gamma);
        const Ft = profiled(trialPhi, trialGamma);
        if (Number.isFinite(Ft) && Ft <= F - 2e-4 * alpha * dec + 1e-12 * (1 + Math.abs(F))) {
          phi.set(trialPhi);
          gamma.set(trialGamma);
          F = Ft;
          return alpha;
        }
      }
      alpha *= 0.5;
    }
    return 0;
  };

  // H p by a forward difference of ∇F, each parameter moving at most DIFFERENCE_STEP of its σ.
  const sigma = new Float64Array(n);
  for (let a = 0; a < n; a++) sigma[a] = Math.sqrt(V[idx[a] * P + idx[a]]) || 1;
  const gShifted = new Float64Array(n);
  let g = new Float64Array(n);
  const hessianTimes = (p: Float64Array, out: Float64Array): boolean => {
    let largest = 0;
    for (let a = 0; a < n; a++) largest = Math.max(largest, Math.abs(p[a]) / sigma[a]);
    if (largest === 0) {
      out.fill(0);
      return true;
    }
    for (const sign of [1, -1]) {
      const eps = (sign * DIFFERENCE_STEP) / largest;
      trialPhi.set(phi);
      for (let a = 0; a < n; a++) trialPhi[idx[a]] += eps * p[a];
      if (outOfBounds(conditional, trialPhi)) continue;
      trialGamma.set(gamma);
      if (!Number.isFinite(profiled(trialPhi, trialGamma))) continue;
      gradient(trialPhi, trialGamma, gShifted);
      for (let a = 0; a < n; a++) out[a] = (gShifted[a] - g[a]) / eps;
      return true;
    }
    return false;
  };

  /** The checked finish from a point where the quasi-Newton estimate met the tolerance. */
  const finish = (rounds: number): WarmOutcome => {
    for (let round = 0; round < rounds; round++) {
      const check = newtonCheck({ n, applyM, hessianTimes }, g, tolerance);
      work.products += check.products;
      const dec = check.decrement;
      if (!Number.isFinite(dec)) {
        profiled(phi, gamma);
        return outcome(false, F, NaN, 'a direction of negative curvature turned up in the stop test');
      }
      if (dec <= tolerance) {
        // The final step: kept when F does not rise beyond its rounding.
        trialPhi.set(phi);
        for (let a = 0; a < n; a++) trialPhi[idx[a]] += check.step[a];
        trialGamma.set(gamma);
        const Ft = outOfBounds(conditional, trialPhi) ? NaN : profiled(trialPhi, trialGamma);
        if (Number.isFinite(Ft) && Ft <= F + 1e-12 * (1 + Math.abs(F))) {
          phi.set(trialPhi);
          gamma.set(trialGamma);
          F = Ft;
        } else profiled(phi, gamma);
        return outcome(true, F, dec, null);
      }
      const gOld = Float64Array.from(g);
      const alpha = lineSearch(check.step, dec);
      if (alpha === 0) {
        profiled(phi, gamma);
        return outcome(false, F, dec, `the line search could not lower the NLL along the Newton step (decrement ${dec.toExponential(2)})`);
      }
      work.steps++;
      gradient(phi, gamma, g);
      for (let a = 0; a < n; a++) check.step[a] *= alpha;
      addPair(check.step, gOld, g);
    }
    return outcome(false, F, NaN, `the Newton decrement did not fall below ${tolerance} in ${rounds} checked steps`);
  };

  let gNew = new Float64Array(n);
  const step = new Float64Array(n);
  if (norm.gradientIsCurrent) for (let a = 0; a < n; a++) g[a] = d.g[idx[a]];
  else gradient(phi, gamma, g);
  for (let it = 0; ; it++) {
    applyM(g, step);
    let dec = 0;
    for (let a = 0; a < n; a++) {
      dec += g[a] * step[a];
      step[a] = -step[a];
    }
    dec *= 0.5;
    if (!(dec >= 0)) return outcome(false, F, NaN, 'the quasi-Newton direction is not a descent direction');
    if (dec < tolerance) return finish(CHECK_ROUNDS);
    if (it >= maxSteps) return outcome(false, F, NaN, `no convergence in ${maxSteps} quasi-Newton steps`);
    const alpha = lineSearch(step, dec);
    if (alpha === 0) {
      profiled(phi, gamma);
      return outcome(false, F, NaN, 'the line search could not lower the NLL');
    }
    work.steps++;
    gradient(phi, gamma, gNew);
    for (let a = 0; a < n; a++) step[a] *= alpha;
    addPair(step, g, gNew);
    [g, gNew] = [gNew, g];
  }
}

/**
 * Newton on the free normalisations alone (see above), in place. Usually 1–2 steps, stopping
 * once the block's decrement is below 1e-4: Newton converges quadratically there, so the next
 * step would be far below the tolerance and the quasi-Newton loop takes over.
 */
function settleNormalisations(
  ctx: FitContext,
  conditional: FitProblem,
  idx: Int32Array,
  phi: Float64Array,
  gamma: Float64Array,
  scratch: Scratch,
  tolerance: number,
  F0: number,
  profiled: (p: Float64Array, g: Float64Array) => number,
  gradient: (p: Float64Array, g: Float64Array, out: Float64Array | null) => void,
): { F: number; steps: number; gradientIsCurrent: boolean } {
  const m = ctx.problem.model;
  const { ws, d, trialPhi, trialGamma } = scratch;
  let F = F0;
  let steps = 0;
  let gradientIsCurrent = false;
  const norms = Int32Array.from([...idx].filter((p) => p < m.thetaStart));
  const q = norms.length;
  if (q === 0) return { F, steps, gradientIsCurrent };
  const Hq = new Float64Array(q * q);
  const gq = new Float64Array(q);
  const rq = new Float64Array(q);
  const dq = new Float64Array(q);
  for (let it = 0; it < 8; it++) {
    gradient(phi, gamma, null);
    gradientIsCurrent = true;
    normalisationHessian(m, gamma, ctx.eliminate, ws, d, norms, Hq, gq, rq);
    const { L, failedAt } = cholesky(Hq, q);
    if (failedAt >= 0) break;
    for (let a = 0; a < q; a++) dq[a] = -d.g[norms[a]];
    choleskySolve(L, q, dq);
    let decq = 0;
    for (let a = 0; a < q; a++) decq -= 0.5 * d.g[norms[a]] * dq[a];
    if (!(decq > tolerance)) break;
    let alpha = 1;
    let accepted = false;
    for (let ls = 0; ls < 10; ls++) {
      trialPhi.set(phi);
      for (let a = 0; a < q; a++) trialPhi[norms[a]] += alpha * dq[a];
      if (!outOfBounds(conditional, trialPhi)) {
        trialGamma.set(gamma);
        const Ft = profiled(trialPhi, trialGamma);
        if (Number.isFinite(Ft) && Ft <= F - 2e-4 * alpha * decq + 1e-12 * (1 + Math.abs(F))) {
          accepted = true;
          F = Ft;
          break;
        }
      }
      alpha *= 0.5;
    }
    if (!accepted) {
      profiled(phi, gamma); // the yields of the current point, for the gradient that follows
      gradientIsCurrent = false;
      break;
    }
    phi.set(trialPhi);
    gamma.set(trialGamma);
    gradientIsCurrent = false;
    steps++;
    if (decq < 1e-4) break;
  }
  return { F, steps, gradientIsCurrent };
}

/** Σ_k M[row + k] x[k] over k < len, with two partial sums. */
function rowTimes(M: Float64Array, row: number, x: Float64Array, len: number): number {
  let s0 = 0;
  let s1 = 0;
  let k = 0;
  for (; k + 1 < len; k += 2) {
    s0 += M[row + k] * x[k];
    s1 += M[row + k + 1] * x[k + 1];
  }
  if (k < len) s0 += M[row + k] * x[k];
  return s0 + s1;
}

/** F(φ) = min_γ NLL(φ, γ): γ profiled in closed form into `gamma`, the yields left in the scratch. */
export function profiledNll(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch): number {
  const m = problem.model;
  profileGammas(m, problem.data, problem.gammaHeld, phi, gamma, scratch.ws, problem.globals);
  return poissonSum(m, problem.data, scratch.ws) + constraintSum(m, phi, gamma, problem.gammaHeld, problem.globals);
}

export function outOfBounds(problem: FitProblem, phi: Float64Array): boolean {
  const m = problem.model;
  for (let i = 0; i < m.nDense; i++) if (!problem.held[i] && (phi[i] < m.lower[i] || phi[i] > m.upper[i])) return true;
  return false;
}
