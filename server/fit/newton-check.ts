/**
 * The true Newton step and decrement of a smooth function F at a point, without forming its
 * Hessian: preconditioned conjugate gradients on H x = g (Hestenes & Stiefel 1952; Nocedal &
 * Wright, Numerical Optimization, 2nd ed., Algorithm 5.3), where each product H p is a forward
 * difference of the analytic gradient, (∇F(φ + εp) − ∇F(φ))/ε (the same book, §8.1), and the
 * preconditioner M is a good approximation of H⁻¹ (the minimum's covariance refined by BFGS).
 *
 * Why: a quasi-Newton stop on gᵀMg/2 < tolerance measures the decrement with the approximate
 * inverse M. Where M underestimates H⁻¹ in the direction of g (the curvature at the refit's
 * point is flatter than at the minimum, or the BFGS pairs only saw a few directions), that
 * estimate passes while the true decrement gᵀH⁻¹g/2 is larger. Conjugate gradients with the
 * true curvature find exactly the directions where M is wrong, in a few products when M is close.
 *
 * Energy identity of conjugate gradients (the same book, §5.1): after k steps from x₀ = 0,
 * gᵀH⁻¹g = gᵀx_k + r_kᵀH⁻¹r_k with r_k = g − H x_k. The returned decrement is
 * ½(gᵀx_k + r_kᵀM r_k): the first term is exact, the second is the remainder measured with M;
 * the loop stops once that remainder is below a thousandth of the first term (or of the
 * tolerance), so an error of M by a factor of a few changes the decrement by less than 1 %, or
 * once even four times the remainder leaves the decrement below half the tolerance.
 */

export interface NewtonCheck {
  /** ½ gᵀH⁻¹g, or NaN when a direction of non-positive curvature was met. */
  decrement: number;
  /** The Newton step −H⁻¹g (valid when the decrement is finite). */
  step: Float64Array;
  /** Hessian-vector products used (one gradient each). */
  products: number;
}

export interface NewtonCheckProblem {
  n: number;
  /** out = M x (M ≈ H⁻¹, symmetric positive definite). */
  applyM(x: Float64Array, out: Float64Array): void;
  /** out = H p, or false when no product could be formed (the function is not finite near φ). */
  hessianTimes(p: Float64Array, out: Float64Array): boolean;
}

const MAX_PRODUCTS = 12;

export function newtonCheck(problem: NewtonCheckProblem, g: Float64Array, tolerance: number): NewtonCheck {
  const { n } = problem;
  const x = new Float64Array(n);
  const r = Float64Array.from(g);
  const z = new Float64Array(n);
  const p = new Float64Array(n);
  const Hp = new Float64Array(n);
  problem.applyM(r, z);
  p.set(z);
  let rz = dot(r, z, n);
  let products = 0;
  // M must be positive definite: rᵀMr ≤ 0 for a non-zero gradient means it is not, and nothing can be verified.
  if (!(rz > 0) && dot(g, g, n) > 0) return { decrement: NaN, step: x, products };
  let remainder = rz;
  while (products < MAX_PRODUCTS && remainder > 0) {
    if (!problem.hessianTimes(p, Hp)) return { decrement: NaN, step: x, products };
    products++;
    const pHp = dot(p, Hp, n);
    if (!(pHp > 0)) return { decrement: NaN, step: x, products };
    const alpha = rz / pHp;
    for (let a = 0; a < n; a++) {
      x[a] += alpha * p[a];
      r[a] -= alpha * Hp[a];
    }
    problem.applyM(r, z);
    const rzNew = dot(r, z, n);
    remainder = Math.max(0, rzNew);
    const gx = dot(g, x, n);
    // Decided: the remainder is small against the decrement, or even four times it leaves the
    // decrement below half the tolerance (M would have to miss H⁻¹ fourfold along r).
    if (remainder <= 1e-3 * Math.max(gx, tolerance) || gx + 4 * remainder <= 0.5 * tolerance) break;
    const beta = rzNew / rz;
    for (let a = 0; a < n; a++) p[a] = z[a] + beta * p[a];
    rz = rzNew;
  }
  const gx = dot(g, x, n);
  for (let a = 0; a < n; a++) x[a] = -x[a];
  return { decrement: 0.5 * (gx + remainder), step: x, products };
}

function dot(a: Float64Array, b: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i] * b[i];
  return s;
}
