import type { FitProblem } from './compiled-model';
import { cholesky, choleskySolve } from './cholesky';
import { computeDerivatives, createDerivatives, type Derivatives } from './derivatives';
import { negativeLogLikelihood } from './likelihood';
import { createWorkspace, type Workspace } from './yields';

/**
 * Newton's method with bounds (docs/likelihood.md §5): analytic gradient and γ-reduced Hessian, steps
 * solved by Cholesky on the (μ, k, θ) system, a backtracking (Armijo) line search along the
 * step projected onto the bounds, Levenberg damping when the Hessian is not positive
 * definite, and the stop on the Newton decrement gᵀH⁻¹g/2 < tolerance (Nocedal & Wright,
 * Numerical Optimization, 2nd ed., §3.1 and §3.4; the decrement as in Boyd & Vandenberghe,
 * Convex Optimization, §9.5). A parameter at a bound whose gradient points outwards is held
 * there for the step (active set). Once the stop is met, the Newton step already solved is
 * taken as a final step (it costs one NLL evaluation and squares the distance to the minimum).
 *
 * A point where the line search cannot go on, or that is still moving after 40 iterations,
 * while a template sits on the clip edge is returned as 'edge': clip-edge.ts then minimises
 * on the edge and off it.
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
  /** Stop on a kink the steps keep crossing (default true; clip-edge.ts turns it off to go on when holding failed). */
  watchKinks?: boolean;
  /** Checked between iterations; an aborted signal ends the loop early (status 'cancelled'). */
  signal?: AbortSignal;
}

export type NewtonStatus = 'converged' | 'edge' | 'failed' | 'cancelled';

export interface NewtonResult {
  status: NewtonStatus;
  phi: Float64Array;
  gamma: Float64Array;
  nll: number;
  iterations: number;
  /** Newton decrement where the stop was met (before the final step), or at the last iteration. */
  decrement: number;
  damped: boolean;
  message: string | null;
  /** With status 'edge': the sample-bins that sit on the clip edge or kept crossing it. */
  edgeBins?: { sample: number; bin: number }[];
}

const BOUND_EPS = 1e-12;

export function newtonLoop(problem: FitProblem, phi0: Float64Array, gamma0: Float64Array, scratch: Scratch, options: MinimiseOptions = {}): NewtonResult {
  const { model: m, data, gammaHeld, globals } = problem;
  const tol = options.tolerance ?? 1e-9;
  const maxIt = options.maxIterations ?? 100;
  const P = m.nDense;
  const G = m.nGamma;
  const { ws, d, trialPhi, trialGamma, eliminate } = scratch;
  const phi = Float64Array.from(phi0);
  const gamma = Float64Array.from(gamma0);
  project(problem, phi, gamma);

  let nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
  let damped = false;
  const crossing = new CrossingWatch(problem);
  crossing.record(ws);
  const result = (status: NewtonStatus, it: number, dec: number, message: string | null): NewtonResult => ({ status, phi, gamma, nll, iterations: it, decrement: dec, damped, message });
  const edge = (it: number, dec: number): NewtonResult => ({ ...result('edge', it, dec, null), edgeBins: crossing.bins(ws) });
  if (!Number.isFinite(nll)) return result('failed', 0, NaN, 'the starting point gives zero expected events in a bin with observed events');

  const deltaPhi = new Float64Array(P);
  const deltaGamma = new Float64Array(G);
  let lastDec = Infinity;
  let escapes = 0;
  // Trial point along the step (projected onto the bounds) and its NLL; the yields stay in ws.
  const trialAt = (alpha: number) => {
    for (let i = 0; i < P; i++) trialPhi[i] = phi[i] + alpha * deltaPhi[i];
    for (let g = 0; g < G; g++) trialGamma[g] = gamma[g] + alpha * deltaGamma[g];
    project(problem, trialPhi, trialGamma);
    return negativeLogLikelihood(m, data, gammaHeld, trialPhi, trialGamma, ws, globals);
  };
  for (let it = 0; ; it++) {
    if (options.signal?.aborted) return result('cancelled', it, lastDec, 'cancelled');
    chooseEliminated(problem, phi, gamma, scratch);
    computeDerivatives(m, data, phi, gamma, eliminate, ws, d, true, false, globals);

    // Free dense set: not held, not pressed against a bound.
    const free = freeSet(problem, phi, d.g);
    const n = free.length;
    const Hf = new Float64Array(n * n);
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) Hf[a * n + b] = d.H[free[a] * P + free[b]];
    const L = factorDamped(Hf, n);
    if (L.damped) damped = true;
    if (!L.factor) return result('failed', it, NaN, 'the Hessian could not be made positive definite');
    // Newton step on the reduced system, then the eliminated γ.
    const step = new Float64Array(n);
    for (let a = 0; a < n; a++) step[a] = -d.gReduced[free[a]];
    choleskySolve(L.factor, n, step);
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
    if (dec < tol) {
      // The final step, kept when the NLL does not rise beyond its rounding.
      const trial = trialAt(1);
      if (Number.isFinite(trial) && trial <= nll + roundingOf(problem, ws, nll)) {
        phi.set(trialPhi);
        gamma.set(trialGamma);
        nll = trial;
      } else nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
      // A stationary point where the Hessian had to be damped has a direction of negative
      // curvature: a saddle, not a minimum. Step along that direction (both ways, a few
      // lengths); where the NLL falls, Newton goes on from there.
      if (L.damped && escapes < MAX_SADDLE_ESCAPES && it < maxIt) {
        const v = negativeCurvature(Hf, n);
        if (v) {
          deltaPhi.fill(0);
          for (let a = 0; a < n; a++) deltaPhi[free[a]] = v[a];
          deltaGamma.fill(0);
          for (let g = 0; g < G; g++) {
            if (!eliminate[g]) continue;
            let s = 0;
            for (let a = 0; a < n; a++) s += d.Bt[g * P + free[a]] * v[a];
            deltaGamma[g] = -s / d.D[g];
          }
          let best = nll - 10 * roundingOf(problem, ws, nll) - 1e-12;
          let bestAlpha = 0;
          for (const alpha of SADDLE_STEPS) {
            const t = trialAt(alpha);
            if (Number.isFinite(t) && t < best) {
              best = t;
              bestAlpha = alpha;
            }
          }
          if (bestAlpha !== 0) {
            escapes++;
            nll = trialAt(bestAlpha);
            phi.set(trialPhi);
            gamma.set(trialGamma);
            crossing.record(ws);
            continue;
          }
          nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
        }
      }
      return result('converged', it, dec, null);
    }
    if (it >= maxIt) return result('failed', it, dec, `no convergence after ${maxIt} Newton iterations (decrement ${dec.toExponential(2)})`);

    // Backtracking line search on the projected path.
    let slope = 0;
    for (let i = 0; i < P; i++) slope += d.g[i] * deltaPhi[i];
    for (let g = 0; g < G; g++) slope += d.gGamma[g] * deltaGamma[g];
    let alpha = 1;
    let accepted = false;
    for (let ls = 0; ls < 50; ls++) {
      const trial = trialAt(alpha);
      // A trial no lower than the current point is taken only where the decrement is below
      // the rounding of the NLL (where no decrease can be seen).
      if (Number.isFinite(trial) && trial <= nll + 1e-4 * alpha * Math.min(slope, 0) + 1e-13 * (1 + Math.abs(nll)) && (trial < nll || dec < roundingOf(problem, ws, nll))) {
        phi.set(trialPhi);
        gamma.set(trialGamma);
        nll = trial;
        accepted = true;
        break;
      }
      alpha *= 0.5;
    }
    if (!accepted) {
      // Restore the yields at the current point for the caller.
      nll = negativeLogLikelihood(m, data, gammaHeld, phi, gamma, ws, globals);
      if (edgeSampleBins(problem, ws).length > 0) return edge(it, dec);
      // A template within 1e-2 of its size from the clip edge: a step across it meets the kink
      // before the line search can see a decrease; that template is the edge to hold.
      const near = edgeSampleBins(problem, ws, NEAR_EDGE);
      if (near.length > 0) return { ...edge(it, dec), edgeBins: near };
      // A decrease below the rounding of the NLL cannot be seen: the stop is then as good as
      // the arithmetic allows, and is reported so. Anywhere above that, the line search failed.
      if (dec < roundingOf(problem, ws, nll)) return result('converged', it, dec, `the decrement stopped at ${dec.toExponential(2)}, limited by the rounding of the NLL`);
      return result('failed', it, dec, `the line search could not lower the NLL (decrement ${dec.toExponential(2)})`);
    }
    if (it >= 40 && edgeSampleBins(problem, ws).length > 0) return edge(it + 1, dec);
    // Steps that keep taking templates across the clip without the quadratic convergence of
    // Newton are circling a kink: those templates are the edge.
    if (options.watchKinks !== false && crossing.stalled(ws, dec)) return edge(it + 1, dec);
  }
}

const MAX_SADDLE_ESCAPES = 5;

/** Step lengths along a unit direction of negative curvature, both ways (θ is in units of its prior width). */
const SADDLE_STEPS = [0.05, 0.1, 0.2, 0.5, 1, 2, 4].flatMap((t) => [t, -t]);

/**
 * A unit vector v with vᵀHv clearly below zero (below −1e-8 times the largest diagonal), or
 * null: the eigenvector of H's lowest eigenvalue by power iteration on cI − H, with c
 * Gershgorin's bound on the largest eigenvalue (common practice, no source). Used only where a
 * stationary point needed damping, so its O(n²) per iteration is paid rarely.
 */
export function negativeCurvature(H: Float64Array, n: number): Float64Array | null {
  if (n === 0) return null;
  let c = 0;
  let largestDiag = 0;
  for (let a = 0; a < n; a++) {
    let row = 0;
    for (let b = 0; b < n; b++) row += Math.abs(H[a * n + b]);
    c = Math.max(c, row);
    largestDiag = Math.max(largestDiag, Math.abs(H[a * n + a]));
  }
  let v = new Float64Array(n);
  // Start from the most negative diagonal, plus a little of everything.
  let lowest = 0;
  for (let a = 1; a < n; a++) if (H[a * n + a] < H[lowest * n + lowest]) lowest = a;
  for (let a = 0; a < n; a++) v[a] = a === lowest ? 1 : 1e-3 * Math.sin(a + 1);
  let w = new Float64Array(n);
  let rayleigh = Infinity;
  for (let it = 0; it < 500; it++) {
    // w = (cI − H) v
    let norm = 0;
    for (let a = 0; a < n; a++) {
      let acc = 0;
      for (let b = 0; b < n; b++) acc += H[a * n + b] * v[b];
      w[a] = c * v[a] - acc;
      norm += w[a] * w[a];
    }
    norm = Math.sqrt(norm);
    if (!(norm > 0)) return null;
    for (let a = 0; a < n; a++) w[a] /= norm;
    [v, w] = [w, v];
    const next = c - norm; // Rayleigh quotient of H once converged
    const settled = Math.abs(next - rayleigh) < 1e-7 * (c + 1e-300);
    rayleigh = next;
    if (settled && it > 10) break;
  }
  let vHv = 0;
  for (let a = 0; a < n; a++) {
    let acc = 0;
    for (let b = 0; b < n; b++) acc += H[a * n + b] * v[b];
    vHv += v[a] * acc;
  }
  return vHv < -1e-8 * Math.max(largestDiag, 1e-300) ? v : null;
}

/**
 * Watches the side of the clip every template with a shape effect is on, step by step. The
 * loop is stalled on a kink when, three steps running near the minimum (decrement below 1e-2),
 * some template changed side while the decrement fell by less than a factor 4 (Newton's own
 * rate is quadratic).
 */
class CrossingWatch {
  private side: Uint8Array;
  private crossed = new Set<number>();
  private slow = 0;
  private lastDec = Infinity;
  constructor(private readonly problem: FitProblem) {
    this.side = new Uint8Array(problem.model.nominal.length);
  }

  /** Remembers the side of every template at the yields in ws; returns the sample-bins that changed side. */
  record(ws: Workspace): number[] {
    const m = this.problem.model;
    const changed: number[] = [];
    for (let s = 0; s < m.nSamples; s++) {
      if (!m.sampleInFit[s] || m.shapePtr[s] === m.shapePtr[s + 1]) continue;
      const sb0 = m.sampleBinStart[s];
      for (let j = 0; j < m.sampleNBins[s]; j++) {
        const on = ws.A[sb0 + j] > 0 ? 1 : 2;
        if (this.side[sb0 + j] !== 0 && this.side[sb0 + j] !== on) changed.push(sb0 + j);
        this.side[sb0 + j] = on;
      }
    }
    return changed;
  }

  stalled(ws: Workspace, dec: number): boolean {
    const changed = this.record(ws);
    // Far from the minimum Newton is not quadratic yet (damped, line search cutting the steps).
    const slow = changed.length > 0 && dec < 1e-2 && dec > 0.25 * this.lastDec;
    this.lastDec = dec;
    if (!slow) {
      this.slow = 0;
      this.crossed.clear();
      return false;
    }
    for (const sb of changed) this.crossed.add(sb);
    return ++this.slow >= 3;
  }

  /** The edge: templates on it now, and those that kept crossing. */
  bins(ws: Workspace): { sample: number; bin: number }[] {
    const m = this.problem.model;
    const out = edgeSampleBins(this.problem, ws);
    const seen = new Set(out.map(({ sample, bin }) => m.sampleBinStart[sample] + bin));
    for (const sb of this.crossed) {
      if (seen.has(sb)) continue;
      let s = 0;
      while (m.sampleBinStart[s + 1] !== undefined && m.sampleBinStart[s + 1] <= sb && s + 1 < m.nSamples) s++;
      out.push({ sample: s, bin: sb - m.sampleBinStart[s] });
    }
    return out;
  }
}

/**
 * The γ eliminated in the Schur complement (scratch.eliminate): every free γ except those held
 * at a bound by a gradient pointing outwards (active set), which stay where they are for the step.
 */
export function chooseEliminated(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch): void {
  const { model: m, data, gammaHeld, globals } = problem;
  const { ws, d, eliminate } = scratch;
  let anyAtBound = false;
  for (let g = 0; g < m.nGamma; g++) if (!gammaHeld[g] && (gamma[g] <= BOUND_EPS || gamma[g] >= 10 - BOUND_EPS)) anyAtBound = true;
  if (anyAtBound) computeDerivatives(m, data, phi, gamma, eliminate.fill(0), ws, d, false, false, globals);
  for (let g = 0; g < m.nGamma; g++) {
    if (gammaHeld[g]) {
      eliminate[g] = 0;
      continue;
    }
    const atLow = anyAtBound && gamma[g] <= BOUND_EPS && d.gGamma[g] > 0;
    const atHigh = anyAtBound && gamma[g] >= 10 - BOUND_EPS && d.gGamma[g] < 0;
    eliminate[g] = atLow || atHigh ? 0 : 1;
  }
}

/** Dense parameters not held and not pressed against a bound by the gradient. */
export function freeSet(problem: FitProblem, phi: Float64Array, g: Float64Array): Int32Array {
  const m = problem.model;
  const out: number[] = [];
  for (let i = 0; i < m.nDense; i++) {
    if (problem.held[i]) continue;
    if (phi[i] <= m.lower[i] + BOUND_EPS * (1 + Math.abs(m.lower[i])) && g[i] > 0) continue;
    if (phi[i] >= m.upper[i] - BOUND_EPS * (1 + Math.abs(m.upper[i])) && g[i] < 0) continue;
    out.push(i);
  }
  return Int32Array.from(out);
}

/**
 * Cholesky of H, or of H + λ diag(H) (+ a floor for zero diagonals) with λ raised ×10 from 1e-8
 * until it succeeds (Levenberg damping); null when even λ = 1e12 fails.
 */
export function factorDamped(H: Float64Array, n: number): { factor: Float64Array | null; damped: boolean } {
  let { L, failedAt } = cholesky(H, n);
  if (failedAt < 0) return { factor: L, damped: false };
  let lambda = 1e-8;
  while (failedAt >= 0 && lambda < 1e12) {
    const Hd = Float64Array.from(H);
    for (let a = 0; a < n; a++) Hd[a * n + a] += lambda * (Math.abs(H[a * n + a]) + 1e-8);
    ({ L, failedAt } = cholesky(Hd, n));
    lambda *= 10;
  }
  return { factor: failedAt >= 0 ? null : L, damped: true };
}

/**
 * The rounding of the NLL at the yields in `ws`: each Poisson term ν − n + n ln(n/ν) is a
 * difference of numbers of the size of ν and n, so the sum carries an error of the order of
 * the machine epsilon (2.2e-16) times Σ(ν + n); the bound here is 45 times that.
 */
export function roundingOf(problem: FitProblem, ws: Workspace, nll: number): number {
  const m = problem.model;
  let sum = 1 + Math.abs(nll);
  for (let b = 0; b < m.nBins; b++) if (m.binInFit[b]) sum += Math.abs(ws.nu[b]) + problem.data[b];
  return 1e-14 * sum;
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

/** How close to zero, relative to the template's size, a template counts as sitting on the clip edge. */
export const EDGE_TOLERANCE = 1e-4;

/**
 * Sample-bins in the fit sitting on the clip edge: |A| within EDGE_TOLERANCE of the template's
 * size there, ν0 + Σ (|hd| + |hs|) over its shape effects (a template that no effect moves has
 * no edge).
 */
/** How near the clip edge a template may be for a failed line search to be taken as stopped on it. */
const NEAR_EDGE = 1e-2;

export function edgeSampleBins(problem: FitProblem, ws: Workspace, tolerance = EDGE_TOLERANCE): { sample: number; bin: number }[] {
  const m = problem.model;
  const out: { sample: number; bin: number }[] = [];
  for (let s = 0; s < m.nSamples; s++) {
    if (!m.sampleInFit[s] || m.shapePtr[s] === m.shapePtr[s + 1]) continue;
    const sb0 = m.sampleBinStart[s];
    for (let j = 0; j < m.sampleNBins[s]; j++) {
      const A = ws.A[sb0 + j];
      const size = templateSize(m, s, j);
      if (size > 0 && Math.abs(A) <= tolerance * size) out.push({ sample: s, bin: j });
    }
  }
  return out;
}

/** ν0 + Σ (|hd| + |hs|) of a sample-bin: the scale against which its distance to the edge is measured. */
export function templateSize(m: FitProblem['model'], s: number, j: number): number {
  let size = m.nominal[m.sampleBinStart[s] + j];
  for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) size += Math.abs(m.shapeHd[m.shapeOffset[e] + j]) + Math.abs(m.shapeHs[m.shapeOffset[e] + j]);
  return size;
}
