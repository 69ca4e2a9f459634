import type { FitContext } from './covariance';
import { computeDerivatives } from './derivatives';
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

  const fallback = (steps: number): ConditionalResult => {
    for (let i = 0; i < P; i++) phi[i] = Math.min(m.upper[i], Math.max(m.lower[i], phi[i]));
    phi[index] = value;
    const r = minimise(conditional, phi, gamma, scratch, { tolerance });
    const ok = r.status === 'converged' || r.status === 'edge';
    return { ok, nll: r.nll, phi: r.phi, gamma: r.gamma, chordSteps: steps, refreshed: true, message: ok ? null : r.message };
  };
  if (outOfBounds(conditional, phi)) return fallback(0);

  const { ws, d, trialPhi, trialGamma } = scratch;
  const profiled = (p: Float64Array, g: Float64Array) => {
    profileGammas(m, problem.data, problem.gammaHeld, p, g, ws);
    return poissonSum(m, problem.data, ws) + constraintSum(m, p, g, problem.gammaHeld);
  };
  const gradient = (p: Float64Array, g: Float64Array, out: Float64Array) => {
    computeDerivatives(m, problem.data, p, g, ctx.eliminate, ws, d, false);
    for (let a = 0; a < n; a++) out[a] = d.g[idx[a]];
  };

  let F = profiled(phi, gamma);
  if (!Number.isFinite(F)) return fallback(0);
  // Inverse Hessian with φ_i removed: V − V[:,i] V[i,:] / V_ii.
  const Hinv = new Float64Array(n * n);
  for (let a = 0; a < n; a++) {
    const va = V[idx[a] * P + index] / Vii;
    for (let b = 0; b < n; b++) Hinv[a * n + b] = V[idx[a] * P + idx[b]] - va * V[index * P + idx[b]];
  }
  let g = new Float64Array(n);
  let gNew = new Float64Array(n);
  const step = new Float64Array(n);
  const Hy = new Float64Array(n);
  gradient(phi, gamma, g);

  for (let it = 0; ; it++) {
    let dec = 0;
    for (let a = 0; a < n; a++) {
      let acc = 0;
      const row = a * n;
      for (let b = 0; b < n; b++) acc += Hinv[row + b] * g[b];
      step[a] = -acc;
      dec += g[a] * acc;
    }
    dec *= 0.5;
    if (dec < tolerance) return { ok: true, nll: F, phi, gamma, chordSteps: it, refreshed: false, message: null };
    if (it >= MAX_STEPS || !(dec >= 0)) return fallback(it);

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

    // BFGS update of the inverse Hessian with s = α·step, y = ∇F_new − ∇F.
    let sy = 0;
    for (let a = 0; a < n; a++) sy += alpha * step[a] * (gNew[a] - g[a]);
    if (sy > 0) {
      const rho = 1 / sy;
      let yHy = 0;
      for (let a = 0; a < n; a++) {
        let acc = 0;
        const row = a * n;
        for (let b = 0; b < n; b++) acc += Hinv[row + b] * (gNew[b] - g[b]);
        Hy[a] = acc;
        yHy += (gNew[a] - g[a]) * acc;
      }
      const coef = rho * rho * yHy + rho;
      for (let a = 0; a < n; a++) {
        const sa = alpha * step[a];
        const row = a * n;
        for (let b = 0; b < n; b++) {
          const sb = alpha * step[b];
          Hinv[row + b] += coef * sa * sb - rho * (Hy[a] * sb + sa * Hy[b]);
        }
      }
    }
    [g, gNew] = [gNew, g];
  }
}

function outOfBounds(problem: FitContext['problem'], phi: Float64Array): boolean {
  const m = problem.model;
  for (let i = 0; i < m.nDense; i++) if (!problem.held[i] && (phi[i] < m.lower[i] || phi[i] > m.upper[i])) return true;
  return false;
}
