import type { FitProblem } from './compiled-model';
import { cholesky, choleskyInverse, choleskySolve } from './cholesky';
import { computeDerivatives } from './derivatives';
import { negativeLogLikelihood } from './likelihood';
import { evenPart } from './interpolation';
import type { Scratch } from './minimiser';
import { chooseEliminated, edgeSampleBins, templateSize } from './newton';

/**
 * Covariance at the minimum, V = H⁻¹ (docs/likelihood.md §5). The Hessian is the γ-reduced one over the
 * parameters not held, so V is exactly the (μ, k, θ) block of the full inverse (Schur
 * complement). Everything a refit needs to start from the minimum is kept with it: this is
 * the fit context that impacts, scans and limits share, serially or on worker threads.
 */
export interface FitContext {
  /** Unique per context, so a worker can recognise one it has already prepared. */
  key: string;
  problem: FitProblem;
  phi: Float64Array;
  gamma: Float64Array;
  nll: number;
  /** Dense parameters in V (not held). */
  free: Int32Array;
  /** V over all dense parameters (row-major, nDense²; zero rows for held ones). */
  V: Float64Array;
  /** h_b = ∂²NLL/∂γ_b∂φ rows and D_b = ∂²NLL/∂γ_b² at the minimum. */
  Bt: Float64Array;
  D: Float64Array;
  eliminate: Uint8Array;
  /** The unreduced (μ, k) block of H (before eliminating γ), for the statistical-only σ_μ. */
  pkBlock: Float64Array;
  /** (H_φφ)⁻¹_μμ: σ_μ² with every γ fixed (the template-statistics group impact). */
  varMuGammaFixed: number | null;
  /** V h_g per γ (see covarianceTimesCoupling), filled on first use; not sent to workers. */
  VBt?: Float64Array;
}

let contextCount = 0;

export type CurvatureOutcome =
  | { ok: true; context: FitContext; conditionNumber: number }
  | { ok: false; message: string; partners: number[] };

/**
 * One Hessian at the minimum over every parameter not held, inverted by Cholesky. At a minimum
 * held on a clip edge (clip-edge.ts) the curvature is not defined: there, if the Hessian with
 * the templates on the edge taken as clipped is not positive definite, it is taken where those
 * templates are 1e-4 of their size above zero (the side the edge is approached from, where
 * their information still counts), and the context keeps the minimum itself.
 */
export function curvatureAt(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch): CurvatureOutcome {
  const first = curvatureAtPoint(problem, phi, gamma, phi, scratch, null, null);
  if (first.ok) return first;
  // A γ pressed against its bound (0, say: a template's bin emptied by the data) is where the
  // minimiser held it, the gradient pointing outwards: its curvature is not that of a free
  // parameter. The covariance then holds it there too, as a bound parameter is held.
  const bound = gammaAtBound(problem, phi, gamma, scratch);
  if (bound) {
    const held = curvatureAtPoint(problem, phi, gamma, phi, scratch, null, bound);
    if (held.ok) return held;
  }
  const edge = besideTheEdge(problem, phi, gamma, scratch);
  if (!edge) return first;
  const second = curvatureAtPoint(problem, edge.phi, gamma, phi, scratch, null, bound);
  if (second.ok) return second;
  // Still not positive definite: the edge supplies the curvature the likelihood lacks there.
  // The covariance then holds it: V = Z (Zᵀ H Z)⁻¹ Zᵀ with Z an orthonormal basis of the
  // directions that keep A_E = 0 (J Z = 0, J the templates' gradients), the inverse of the
  // Hessian restricted to the edge (Nocedal & Wright, Numerical Optimization, 2nd ed., §12.4
  // and §17.1: the limit ρ → ∞ of the penalty form (H + ρ JᵀJ)⁻¹, taken without its rounding).
  // On the edge the Hessian of the Lagrangian, restricted to it, is that of the likelihood with
  // the edge templates taken as clipped (their second derivatives times the multiplier cancel,
  // and their first derivatives vanish along the edge): taken 1e-4 of their size on the clipped
  // side, then the same above the edge where that fails.
  const below = besideTheEdge(problem, phi, gamma, scratch, -1);
  const third = below ? curvatureAtPoint(problem, below.phi, gamma, phi, scratch, edge.J, bound) : null;
  if (third?.ok) return third;
  const fourth = curvatureAtPoint(problem, edge.phi, gamma, phi, scratch, edge.J, bound);
  return fourth.ok ? fourth : first;
}

/** The γ the minimiser holds on a bound at this point (minimiser's active set), or null when none. */
function gammaAtBound(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch): Uint8Array | null {
  const m = problem.model;
  chooseEliminated(problem, phi, gamma, scratch);
  const out = new Uint8Array(m.nGamma);
  let any = false;
  for (let g = 0; g < m.nGamma; g++)
    if (!problem.gammaHeld[g] && !scratch.eliminate[g]) {
      out[g] = 1;
      any = true;
    }
  return any ? out : null;
}

/**
 * φ with every template on the clip edge moved 1e-4 of its size above zero (side −1: below) along
 * Jᵀ/|J|², and those gradients J (rows of length nDense); null when no template is on the edge.
 */
function besideTheEdge(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch, side: 1 | -1 = 1): { phi: Float64Array; J: Float64Array[] } | null {
  const m = problem.model;
  negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, scratch.ws, problem.globals);
  const bins = edgeSampleBins(problem, scratch.ws);
  if (bins.length === 0) return null;
  const out = Float64Array.from(phi);
  const rows: Float64Array[] = [];
  const u = new Float64Array(3);
  for (const { sample: s, bin: j } of bins) {
    const J = new Map<number, number>();
    for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
      evenPart(phi[m.shapeParam[e]], u);
      const p = m.shapeParam[e];
      J.set(p, (J.get(p) ?? 0) + m.shapeHd[m.shapeOffset[e] + j] + u[1] * m.shapeHs[m.shapeOffset[e] + j]);
    }
    let norm = 0;
    for (const [p, x] of J) if (!problem.held[p]) norm += x * x;
    if (!(norm > 0)) continue;
    const move = side * 1e-4 * templateSize(m, s, j) - scratch.ws.A[m.sampleBinStart[s] + j];
    const row = new Float64Array(m.nDense);
    for (const [p, x] of J) {
      if (problem.held[p]) continue;
      out[p] += (move * x) / norm;
      row[p] = x;
    }
    rows.push(row);
  }
  return { phi: out, J: rows };
}

function curvatureAtPoint(problem: FitProblem, phi: Float64Array, gamma: Float64Array, minimum: Float64Array, scratch: Scratch, penalty: Float64Array[] | null, gammaBound: Uint8Array | null): CurvatureOutcome {
  const m = problem.model;
  const P = m.nDense;
  const { ws, d } = scratch;
  // The NLL of the minimum itself, then the yields where the curvature is taken.
  const nll = negativeLogLikelihood(m, problem.data, problem.gammaHeld, minimum, gamma, ws, problem.globals);
  if (phi !== minimum) negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws, problem.globals);
  const eliminate = new Uint8Array(m.nGamma);
  for (let g = 0; g < m.nGamma; g++) eliminate[g] = problem.gammaHeld[g] || gammaBound?.[g] ? 0 : 1;
  computeDerivatives(m, problem.data, phi, gamma, eliminate, ws, d, true, true, problem.globals);
  const freeList: number[] = [];
  for (let i = 0; i < P; i++) if (!problem.held[i]) freeList.push(i);
  const free = Int32Array.from(freeList);
  const n = free.length;
  const Hf = new Float64Array(n * n);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) Hf[a * n + b] = d.H[free[a] * P + free[b]];
  const edge = penalty ? onTheEdge(penalty, free) : null;
  if (edge) edge.restrict(Hf);
  const { L, failedAt } = cholesky(Hf, n, 1e-10);
  if (failedAt >= 0) {
    const partners = degeneratePartners(Hf, L, n, failedAt).map((a) => free[a]);
    const names = [free[failedAt], ...partners].map((i) => m.names[i]);
    return {
      ok: false,
      partners: [free[failedAt], ...partners],
      message:
        partners.length > 0
          ? `The Hessian is not positive definite at the minimum: ${names.join(', ')} move together with no change in the likelihood, so the data cannot tell their effects apart.`
          : `The Hessian is not positive definite at the minimum: ${names[0]} has no effect on the likelihood.`,
    };
  }
  const Vf = choleskyInverse(L, n);
  edge?.unshift(Vf);
  const V = new Float64Array(P * P);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) V[free[a] * P + free[b]] = Vf[a * n + b];

  // Unreduced H_φφ = H̃ + Σ h hᵀ/D: its (μ, k) block, and its inverse's μμ element.
  const schur = d.schur!;
  const nPk = m.thetaStart;
  const pkBlock = new Float64Array(nPk * nPk);
  for (let i = 0; i < nPk; i++) for (let j = 0; j < nPk; j++) pkBlock[i * nPk + j] = d.H[i * P + j] + schur[i * P + j];
  let varMuGammaFixed: number | null = null;
  if (!problem.held[0] && m.nGamma > 0) {
    const Hu = new Float64Array(n * n);
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) Hu[a * n + b] = d.H[free[a] * P + free[b]] + schur[free[a] * P + free[b]];
    if (edge) edge.restrict(Hu);
    const cu = cholesky(Hu, n, 1e-10);
    if (cu.failedAt < 0) {
      const e = new Float64Array(n);
      e[0] = 1; // μ is free[0] when not held
      choleskySolve(cu.L, n, e);
      varMuGammaFixed = e[0] - (edge ? edge.shiftAt(0, 0) : 0);
    }
  }
  const context: FitContext = {
    key: `${process.pid}-${++contextCount}-${Math.random().toString(36).slice(2)}`,
    problem,
    phi: Float64Array.from(minimum),
    gamma: Float64Array.from(gamma),
    nll,
    free,
    V,
    Bt: Float64Array.from(d.Bt),
    D: Float64Array.from(d.D),
    eliminate,
    pkBlock,
    varMuGammaFixed,
  };
  return { ok: true, context, conditionNumber: conditionNumber(Hf, L, n) };
}

/**
 * The directions along the clip edge, for the Hessian restricted to it. Q is an orthonormal
 * basis of the edge gradients (rows of J over the free parameters; modified Gram–Schmidt) and
 * P = I − QQᵀ the projection onto the edge. `restrict` turns H into P H P + s QQᵀ, whose
 * inverse is Z (Zᵀ H Z)⁻¹ Zᵀ + QQᵀ/s exactly (the two parts act on orthogonal subspaces), with
 * s the largest diagonal of P H P so that the factorisation stays well scaled; `unshift`
 * removes QQᵀ/s from that inverse.
 */
function onTheEdge(rows: Float64Array[], free: Int32Array) {
  const n = free.length;
  const Q: Float64Array[] = [];
  for (const row of rows) {
    const q = Float64Array.from(free, (i) => row[i]);
    let size = 0;
    for (let a = 0; a < n; a++) size += q[a] * q[a];
    for (let pass = 0; pass < 2; pass++)
      for (const b of Q) {
        let dot = 0;
        for (let a = 0; a < n; a++) dot += q[a] * b[a];
        for (let a = 0; a < n; a++) q[a] -= dot * b[a];
      }
    let norm = 0;
    for (let a = 0; a < n; a++) norm += q[a] * q[a];
    if (!(norm > 1e-20 * size) || !(norm > 0)) continue;
    norm = Math.sqrt(norm);
    for (let a = 0; a < n; a++) q[a] /= norm;
    Q.push(q);
  }
  let shift = 1;
  const project = (H: Float64Array) => {
    // H ← P H P, with P = I − Σ q qᵀ applied one basis vector at a time on each side.
    for (const q of Q) {
      const Hq = new Float64Array(n);
      for (let a = 0; a < n; a++) {
        let acc = 0;
        for (let b = 0; b < n; b++) acc += H[a * n + b] * q[b];
        Hq[a] = acc;
      }
      let qHq = 0;
      for (let a = 0; a < n; a++) qHq += q[a] * Hq[a];
      for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) H[a * n + b] += -Hq[a] * q[b] - q[a] * Hq[b] + qHq * q[a] * q[b];
    }
  };
  return {
    restrict(H: Float64Array) {
      project(H);
      let largest = 0;
      for (let a = 0; a < n; a++) largest = Math.max(largest, H[a * n + a]);
      shift = largest > 0 ? largest : 1;
      for (const q of Q) for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) H[a * n + b] += shift * q[a] * q[b];
    },
    shiftAt(a: number, b: number) {
      let acc = 0;
      for (const q of Q) acc += q[a] * q[b];
      return acc / shift;
    },
    unshift(V: Float64Array) {
      for (const q of Q) for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) V[a * n + b] -= (q[a] * q[b]) / shift;
    },
  };
}

/**
 * The pivot j failed: column j is (nearly) a combination of the columns before it. Solving
 * H₁₁ x = H₁ⱼ with the partial factor names the parameters it combines, largest first.
 */
function degeneratePartners(H: Float64Array, L: Float64Array, n: number, j: number): number[] {
  if (j === 0) return [];
  const x = new Float64Array(j);
  for (let i = 0; i < j; i++) x[i] = H[i * n + j];
  const Lj = new Float64Array(j * j);
  for (let a = 0; a < j; a++) for (let b = 0; b <= a; b++) Lj[a * j + b] = L[a * n + b];
  choleskySolve(Lj, j, x);
  const weight = (i: number) => Math.abs(x[i]) * Math.sqrt(H[i * n + i] / H[j * n + j]);
  return [...Array(j).keys()].filter((i) => weight(i) > 0.05).sort((a, b) => weight(b) - weight(a)).slice(0, 5);
}

/**
 * Condition number λmax/λmin of H scaled to unit diagonal (D^-½ H D^-½), so it measures
 * near-degeneracy rather than the parameters' units. λmax by power iteration, λmin by
 * inverse iteration with the factor (common practice, no source): an estimate, good to a
 * few per cent, which is all a report needs.
 */
export function conditionNumber(H: Float64Array, L: Float64Array, n: number): number {
  if (n === 0) return 1;
  const s = new Float64Array(n);
  for (let i = 0; i < n; i++) s[i] = 1 / Math.sqrt(H[i * n + i]);
  const power = (apply: (x: Float64Array, y: Float64Array) => void): number => {
    let x = new Float64Array(n).fill(1 / Math.sqrt(n));
    let y = new Float64Array(n);
    let lambda = 0;
    for (let it = 0; it < 100; it++) {
      apply(x, y);
      let norm = 0;
      for (let i = 0; i < n; i++) norm += y[i] * y[i];
      norm = Math.sqrt(norm);
      if (!(norm > 0)) return 0;
      const converged = Math.abs(norm - lambda) < 1e-6 * norm;
      lambda = norm;
      for (let i = 0; i < n; i++) y[i] /= norm;
      [x, y] = [y, x];
      if (converged && it > 5) break;
    }
    return lambda;
  };
  const maxEig = power((x, y) => {
    for (let i = 0; i < n; i++) {
      let acc = 0;
      for (let j = 0; j < n; j++) acc += H[i * n + j] * s[j] * x[j];
      y[i] = acc * s[i];
    }
  });
  // (D^-½ H D^-½)⁻¹ x = D^½ H⁻¹ D^½ x.
  const maxInv = power((x, y) => {
    for (let i = 0; i < n; i++) y[i] = x[i] / s[i];
    choleskySolve(L, n, y);
    for (let i = 0; i < n; i++) y[i] /= s[i];
  });
  return maxEig * maxInv;
}

/**
 * Y = V Bᵀ: row g holds V h_g (nGamma × nDense), computed once per context with contiguous dot
 * products; γ variances and post-fit yield uncertainties both need it.
 */
export function covarianceTimesCoupling(ctx: FitContext): Float64Array {
  if (ctx.VBt) return ctx.VBt;
  const m = ctx.problem.model;
  const P = m.nDense;
  const G = m.nGamma;
  const Y = new Float64Array(G * P);
  for (let g = 0; g < G; g++) {
    if (!ctx.eliminate[g]) continue;
    const row = g * P;
    for (let i = 0; i < P; i++) {
      const vi = i * P;
      let acc = 0;
      for (let k = 0; k < P; k++) acc += ctx.V[vi + k] * ctx.Bt[row + k];
      Y[row + i] = acc;
    }
  }
  ctx.VBt = Y;
  return Y;
}

/** Var(γ_g) = 1/D + (h/D)ᵀ V (h/D), from the block inverse of the full Hessian. */
export function gammaVariance(ctx: FitContext, g: number): number | null {
  if (!ctx.eliminate[g]) return null;
  const P = ctx.problem.model.nDense;
  const Y = covarianceTimesCoupling(ctx);
  const Dg = ctx.D[g];
  const row = g * P;
  let quad = 0;
  for (let i = 0; i < P; i++) quad += ctx.Bt[row + i] * Y[row + i];
  return 1 / Dg + quad / (Dg * Dg);
}
