import type { FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import { cholesky, choleskySolve } from './cholesky';
import { computeDerivatives, normalisationHessian } from './derivatives';
import { profileGammas } from './gamma-profile';
import { constraintSum, poissonSum } from './likelihood';
import { minimise, type Scratch } from './minimiser';

/**
 * A conditional fit: one parameter fixed at a value, all else refitted (impacts, scans, q0,
 * limits). With γ profiled in closed form, the function left is F(φ) = min_γ NLL(φ, γ), whose
 * Hessian at the minimum is the Schur complement already inverted in V.
 *  - Start from the linear response φ = φ̂ + V[:,i] Δ / V_ii, the exact minimiser of the
 *    quadratic model with φ_i = φ̂_i + Δ (or the same step from a nearby conditional minimum
 *    when a root search moves the fixed value a little).
 *  - Settle the unconstrained normalisations (μ, k) first, by Newton on their own small block
 *    of the Hessian at the current point. A yield is k·exp(Σ I(θ)): when θ_i moves, the k that
 *    keeps the well-measured yields in place follows a curve, not the straight line of the
 *    linear response. Off that curve the gradient points across a narrow valley whose walls
 *    have turned with the move; stepping with the minimum's Hessian then throws the weakly
 *    constrained directions far off (steps cut to 1/64 by the line search, ≈ 15–25 steps in
 *    all). Putting k back on the curve removes that stiff residual at the cost of a few
 *    O(bins × samples) evaluations.
 *  - Step with the already factorised Hessian: with φ_i removed, the inverse Hessian is
 *    V − V[:,i] V[i,:] / V_ii; each step costs one gradient (∇F = ∂NLL/∂φ at γ̂(φ)) and a
 *    matrix-vector product. The inverse is refined by BFGS updates from the steps taken
 *    (Nocedal & Wright, Numerical Optimization, 2nd ed., §6.1), so the drift of the Hessian
 *    away from the minimum costs few extra steps.
 *  - When a step leaves the bounds, fails to lower F or the steps stall, continue by full
 *    Newton with a fresh Hessian from where it stands.
 */
export interface ConditionalResult {
  ok: boolean;
  nll: number;
  phi: Float64Array;
  gamma: Float64Array;
  /** Quasi-Newton steps taken with the minimum's Hessian, and whether a fresh Hessian was needed. */
  chordSteps: number;
  /** Newton steps on the normalisations, and gradient evaluations in all. */
  normalisationSteps: number;
  gradients: number;
  refreshed: boolean;
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
  const conditional = { ...problem, held: Uint8Array.from(problem.held) };
  conditional.held[index] = 1;
  const idx = Int32Array.from([...ctx.free].filter((p) => p !== index));
  const n = idx.length;

  // From the minimum, or from a nearby conditional minimum (root searches), along V[:,i].
  const phi = Float64Array.from(warm ? warm.phi : ctx.phi);
  const gamma = Float64Array.from(warm ? warm.gamma : ctx.gamma);
  const Vii = V[index * P + index];
  const delta = value - (warm ? warm.value : ctx.phi[index]);
  for (let a = 0; a < n; a++) phi[idx[a]] += (V[idx[a] * P + index] * delta) / Vii;
  phi[index] = value;
  return settle(ctx, conditional, idx, { index, value }, phi, gamma, scratch, tolerance, MAX_STEPS);
}

/**
 * A fit of the context's problem with nothing more held, from (φ, γ) near its minimum, by the
 * same steps with V as the first inverse Hessian: for a problem whose minimum lies close to
 * the context's (a pseudo-experiment drawn around it), without a fresh Hessian.
 */
export function quasiNewtonFit(ctx: FitContext, phi0: Float64Array, gamma0: Float64Array, scratch: Scratch, tolerance = 1e-9, maxSteps = MAX_STEPS): ConditionalResult {
  return settle(ctx, ctx.problem, ctx.free, null, Float64Array.from(phi0), Float64Array.from(gamma0), scratch, tolerance, maxSteps);
}

/**
 * The steps of a conditional fit from its start (φ, γ) over the free indices idx: the
 * normalisations, then quasi-Newton from V (with the fixed parameter's row and column taken
 * out), then Newton with bounds when that stalls. φ and γ are worked on in place.
 */
function settle(
  ctx: FitContext,
  conditional: FitProblem,
  idx: Int32Array,
  fixed: { index: number; value: number } | null,
  phi: Float64Array,
  gamma: Float64Array,
  scratch: Scratch,
  tolerance: number,
  maxSteps: number,
): ConditionalResult {
  const { problem, V } = ctx;
  const m = problem.model;
  const P = m.nDense;
  const n = idx.length;
  let normalisationSteps = 0;
  let gradients = 0;
  const fallback = (steps: number): ConditionalResult => {
    for (let i = 0; i < P; i++) phi[i] = Math.min(m.upper[i], Math.max(m.lower[i], phi[i]));
    if (fixed) phi[fixed.index] = fixed.value;
    const r = minimise(conditional, phi, gamma, scratch, { tolerance });
    const ok = r.status === 'converged' || r.status === 'edge';
    return { ok, nll: r.nll, phi: r.phi, gamma: r.gamma, chordSteps: steps, normalisationSteps, gradients: gradients + r.iterations + 1, refreshed: true, message: ok ? null : r.message };
  };
  if (outOfBounds(conditional, phi)) return fallback(0);

  const { ws, d, trialPhi, trialGamma } = scratch;
  const profiled = (p: Float64Array, g: Float64Array) => {
    profileGammas(m, problem.data, problem.gammaHeld, p, g, ws, problem.globals);
    return poissonSum(m, problem.data, ws) + constraintSum(m, p, g, problem.gammaHeld, problem.globals);
  };
  const gradient = (p: Float64Array, g: Float64Array, out: Float64Array | null) => {
    gradients++;
    computeDerivatives(m, problem.data, p, g, ctx.eliminate, ws, d, false, false, problem.globals);
    if (out) for (let a = 0; a < n; a++) out[a] = d.g[idx[a]];
  };

  let F = profiled(phi, gamma);
  if (!Number.isFinite(F)) return fallback(0);

  // Newton on the free normalisations alone (see above).
  let gradientIsCurrent = false;
  const norms = Int32Array.from([...idx].filter((p) => p < m.thetaStart));
  const q = norms.length;
  if (q > 0) {
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
        profiled(phi, gamma); // the yields of the current point, for the gradient below
        gradientIsCurrent = false;
        break;
      }
      phi.set(trialPhi);
      gamma.set(trialGamma);
      gradientIsCurrent = false;
      normalisationSteps++;
      // Newton converges quadratically here: after a step with a small decrement the next one
      // would be far below the tolerance, so the quasi-Newton loop takes over.
      if (decq < 1e-4) break;
    }
  }
  // Inverse Hessian: H₀ = V − V[:,i] V[i,:] / V_ii over the free set (φ_i removed), refined
  // by BFGS from the steps taken and applied in product form: the two-loop recursion (Nocedal
  // & Wright, §7.2) keeping every pair, which is the same matrix as the dense update. One n²
  // product with V per step instead of building and updating an n × n inverse.
  const index = fixed ? fixed.index : -1;
  const vi = new Float64Array(n);
  if (fixed) {
    const Vii = V[index * P + index];
    for (let a = 0; a < n; a++) vi[a] = V[idx[a] * P + index] / Vii;
  }
  const applyH0 = (x: Float64Array, out: Float64Array) => {
    let vx = 0;
    if (fixed) for (let a = 0; a < n; a++) vx += V[index * P + idx[a]] * x[a];
    for (let a = 0; a < n; a++) {
      const row = idx[a] * P;
      let acc = 0;
      for (let b = 0; b < n; b++) acc += V[row + idx[b]] * x[b];
      out[a] = fixed ? acc - vi[a] * vx : acc;
    }
  };
  const pairs: { s: Float64Array; y: Float64Array; rho: number }[] = [];
  const coef = new Float64Array(maxSteps + 1);
  const qv = new Float64Array(n);
  const applyHinv = (x: Float64Array, out: Float64Array) => {
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
  let g = new Float64Array(n);
  let gNew = new Float64Array(n);
  const step = new Float64Array(n);
  if (gradientIsCurrent) for (let a = 0; a < n; a++) g[a] = d.g[idx[a]];
  else gradient(phi, gamma, g);

  for (let it = 0; ; it++) {
    applyHinv(g, step);
    let dec = 0;
    for (let a = 0; a < n; a++) {
      dec += g[a] * step[a];
      step[a] = -step[a];
    }
    dec *= 0.5;
    if (dec < tolerance) return { ok: true, nll: F, phi, gamma, chordSteps: it, normalisationSteps, gradients, refreshed: false, message: null };
    if (it >= maxSteps || !(dec >= 0)) return fallback(it);

    // Backtracking on F along the step.
    let alpha = 1;
    let accepted = false;
    for (let ls = 0; ls < 10; ls++) {
      trialPhi.set(phi);
      for (let a = 0; a < n; a++) trialPhi[idx[a]] += alpha * step[a];
      // Outside the box counts as a failed trial: shorter steps may stay inside; if none does,
      // Newton with bounds takes over.
      if (!outOfBounds(conditional, trialPhi)) {
        trialGamma.set(gamma);
        const Ft = profiled(trialPhi, trialGamma);
        if (Number.isFinite(Ft) && Ft <= F - 2e-4 * alpha * dec + 1e-12 * (1 + Math.abs(F))) {
          accepted = true;
          F = Ft;
          break;
        }
      }
      alpha *= 0.5;
    }
    if (!accepted) return fallback(it);
    phi.set(trialPhi);
    gamma.set(trialGamma);
    gradient(phi, gamma, gNew);

    // BFGS pair s = α·step, y = ∇F_new − ∇F, kept when the curvature sᵀy is positive.
    const sk = new Float64Array(n);
    const yk = new Float64Array(n);
    let sy = 0;
    for (let a = 0; a < n; a++) {
      sk[a] = alpha * step[a];
      yk[a] = gNew[a] - g[a];
      sy += sk[a] * yk[a];
    }
    if (sy > 0) pairs.push({ s: sk, y: yk, rho: 1 / sy });
    [g, gNew] = [gNew, g];
  }
}

function outOfBounds(problem: FitProblem, phi: Float64Array): boolean {
  const m = problem.model;
  for (let i = 0; i < m.nDense; i++) if (!problem.held[i] && (phi[i] < m.lower[i] || phi[i] > m.upper[i])) return true;
  return false;
}
