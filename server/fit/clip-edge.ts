import type { CompiledModel, FitProblem } from './compiled-model';
import { cholesky, choleskySolve } from './cholesky';
import { computeDerivatives } from './derivatives';
import { evenPart } from './interpolation';
import { evaluateYields } from './yields';
import { negativeLogLikelihood } from './likelihood';
import { chooseEliminated, edgeSampleBins, factorDamped, freeSet, newtonLoop, project, roundingOf, templateSize, type MinimiseOptions, type NewtonResult, type Scratch } from './newton';

/**
 * The clip edge (docs/likelihood.md §3): ν_sb = max(0, A_sb) × … is not smooth where a template A_sb
 * crosses zero, so Newton's stop cannot be met on that edge. When the Newton loop stops there,
 *  1. hold: minimise on the edge, with every template found on it held at A_sb = 0 (Newton on
 *     the Lagrangian of F subject to A_E(θ) = 0, with the ℓ1 merit function F + ρ Σ|A_e|;
 *     Nocedal & Wright, Numerical Optimization, 2nd ed., §18.1 and §15.5). F here is the NLL
 *     with those templates taken as empty, which equals the NLL on the edge;
 *  2. release: the multiplier λ_e of each held template gives the slope of the NLL leaving
 *     the edge on either side. With L = F + Σ λ_e A_e stationary, a move that takes A_e below
 *     zero (the template stays clipped) changes the NLL at rate λ_e per unit of A_e, and a move
 *     above zero at −λ_e + w_b ∂ν_sb/∂A_sb, where w_b = 1 − n_b/ν_b (the template's yield
 *     then enters the bin). Where a slope is negative, the template is released to that
 *     side by a nudge of 1e-6 of its size and Newton starts again from there;
 *  3. keep the lower NLL of the held and the released minimum (up to three rounds when the
 *     released fit reaches another edge).
 * The result says which was kept, with both NLLs.
 */
export interface EdgeReport {
  /** 'held': the minimum is on the edge; 'released': leaving it reached a lower NLL. */
  kept: 'held' | 'released';
  /** Sample-bins on the edge at the held minimum. */
  bins: { sample: number; bin: number }[];
  heldNll: number;
  /** NLL the released fit reached (null when no side lowers the NLL, so none was tried). */
  releasedNll: number | null;
}

export type EdgeResult = NewtonResult & { edge: EdgeReport | null };

const ROUNDS = 3;
const NUDGE = 1e-6;

export function resolveEdge(problem: FitProblem, start: NewtonResult, scratch: Scratch, options: MinimiseOptions): EdgeResult {
  const m = problem.model;
  let best = start;
  let report: EdgeReport | null = null;
  for (let round = 0; round < ROUNDS; round++) {
    negativeLogLikelihood(m, problem.data, problem.gammaHeld, best.phi, best.gamma, scratch.ws, problem.globals);
    const bins = best.edgeBins && best.edgeBins.length > 0 ? best.edgeBins : edgeSampleBins(problem, scratch.ws);
    if (bins.length === 0) break;
    const held = holdEdge(problem, best.phi, best.gamma, bins, scratch, options);
    // Even unverified, a held point with a lower NLL is a better place to go on from.
    if (!held.ok && held.nll < best.nll) best = { ...best, phi: held.phi, gamma: held.gamma, nll: held.nll, iterations: best.iterations + held.iterations };
    if (!held.ok) {
      // Not a minimum on the edge: Newton goes on from there, stopping on an edge only where the
      // line search fails; a second stop there is kept only once it can be held.
      // Twice not held: the lowest point found stands, as an edge the fit could not verify.
      if (round > 0) {
        negativeLogLikelihood(m, problem.data, problem.gammaHeld, best.phi, best.gamma, scratch.ws, problem.globals);
        return { ...best, status: 'edge', message: `the minimum on the clip edge could not be verified (decrement ${best.decrement.toExponential(2)})`, edge: report ?? { kept: 'held', bins, heldNll: best.nll, releasedNll: null } };
      }
      const on = newtonLoop(problem, best.phi, best.gamma, scratch, { ...options, watchKinks: false });
      const iterations = best.iterations + on.iterations;
      if (on.status !== 'edge') return { ...on, iterations, edge: report };
      best = { ...on, iterations };
      continue;
    }
    if (held.nll <= best.nll + roundingOf(problem, scratch.ws, best.nll)) {
      best = { ...best, phi: held.phi, gamma: held.gamma, nll: held.nll, decrement: held.decrement, iterations: best.iterations + held.iterations };
    }
    report = { kept: 'held', bins: held.bins, heldNll: best.nll, releasedNll: null };
    const nudged = releaseStart(problem, best, held, held.bins, scratch);
    if (!nudged) break;
    const released = newtonLoop(problem, nudged, best.gamma, scratch, options);
    if (released.status === 'cancelled') return { ...released, edge: report };
    if (released.status === 'failed' || !Number.isFinite(released.nll)) break;
    report.releasedNll = released.nll;
    if (!(released.nll < best.nll)) break;
    const iterations = best.iterations + released.iterations;
    if (released.status === 'converged') return { ...released, iterations, edge: { ...report, kept: 'released' } };
    best = { ...released, iterations };
  }
  negativeLogLikelihood(m, problem.data, problem.gammaHeld, best.phi, best.gamma, scratch.ws, problem.globals);
  return { ...best, status: 'edge', edge: report };
}


interface Held {
  ok: boolean;
  phi: Float64Array;
  gamma: Float64Array;
  /** The NLL of the problem itself (not of the emptied templates) at phi. */
  nll: number;
  decrement: number;
  iterations: number;
  /** Multipliers of A_e = 0 at the last iterate (zero when none was computed). */
  lambda: Float64Array;
}

/** The edge's constraints A_e(θ) = ν0 + Σ (θ hd + u(θ) hs), their gradients and diagonal second derivatives. */
function edgeConstraints(m: CompiledModel, bins: { sample: number; bin: number }[], phi: Float64Array, c: Float64Array, J: Float64Array, J2: Float64Array): void {
  const P = m.nDense;
  const u = new Float64Array(3);
  J.fill(0);
  J2.fill(0);
  bins.forEach(({ sample: s, bin: j }, e) => {
    let A = m.nominal[m.sampleBinStart[s] + j];
    for (let k = m.shapePtr[s]; k < m.shapePtr[s + 1]; k++) {
      const p = m.shapeParam[k];
      const hd = m.shapeHd[m.shapeOffset[k] + j];
      const hs = m.shapeHs[m.shapeOffset[k] + j];
      evenPart(phi[p], u);
      A += phi[p] * hd + u[0] * hs;
      J[e * P + p] += hd + u[1] * hs;
      J2[e * P + p] += u[2] * hs;
    }
    c[e] = A;
  });
}

/** The model with the given sample-bins emptied (nominal and shape offsets zero): the NLL on their clipped side. */
function emptied(m: CompiledModel, bins: { sample: number; bin: number }[]): CompiledModel {
  const nominal = Float64Array.from(m.nominal);
  const shapeHd = Float64Array.from(m.shapeHd);
  const shapeHs = Float64Array.from(m.shapeHs);
  for (const { sample: s, bin: j } of bins) {
    nominal[m.sampleBinStart[s] + j] = 0;
    for (let k = m.shapePtr[s]; k < m.shapePtr[s + 1]; k++) {
      shapeHd[m.shapeOffset[k] + j] = 0;
      shapeHs[m.shapeOffset[k] + j] = 0;
    }
  }
  return { ...m, nominal, shapeHd, shapeHs };
}

/**
 * Holds `bins` on the edge; where a step of that minimisation keeps failing because further
 * templates cross the clip along it, those join the held set and it starts again from where it
 * stood (up to four times).
 */
function holdEdge(problem: FitProblem, phi0: Float64Array, gamma0: Float64Array, bins0: { sample: number; bin: number }[], scratch: Scratch, options: MinimiseOptions): Held & { bins: { sample: number; bin: number }[] } {
  let bins = bins0;
  let phi = phi0;
  let gamma = gamma0;
  let iterations = 0;
  for (let grow = 0; ; grow++) {
    const h = holdOnce(problem, phi, gamma, bins, scratch, options);
    iterations += h.iterations;
    if (h.ok || h.crossing.length === 0 || grow >= 4) return { ...h, iterations, bins };
    const m = problem.model;
    const known = new Set(bins.map(({ sample, bin }) => m.sampleBinStart[sample] + bin));
    bins = [...bins, ...h.crossing.filter(({ sample, bin }) => !known.has(m.sampleBinStart[sample] + bin))];
    phi = h.phi;
    gamma = h.gamma;
  }
}

/** Sample-bins with shape effects whose side of the clip differs between two points. */
function crossingsBetween(problem: FitProblem, a: Float64Array, ga: Float64Array, b: Float64Array, gb: Float64Array, scratch: Scratch): { sample: number; bin: number }[] {
  const m = problem.model;
  evaluateYields(m, a, ga, scratch.ws);
  const sideA = scratch.ws.A.map((x) => (x > 0 ? 1 : 0));
  evaluateYields(m, b, gb, scratch.ws);
  const out: { sample: number; bin: number }[] = [];
  for (let s = 0; s < m.nSamples; s++) {
    if (!m.sampleInFit[s] || m.shapePtr[s] === m.shapePtr[s + 1]) continue;
    for (let j = 0; j < m.sampleNBins[s]; j++) {
      const sb = m.sampleBinStart[s] + j;
      if ((scratch.ws.A[sb] > 0 ? 1 : 0) !== sideA[sb]) out.push({ sample: s, bin: j });
    }
  }
  return out;
}

function holdOnce(problem: FitProblem, phi0: Float64Array, gamma0: Float64Array, bins: { sample: number; bin: number }[], scratch: Scratch, options: MinimiseOptions): Held & { crossing: { sample: number; bin: number }[] } {
  const m = problem.model;
  const off: FitProblem = { ...problem, model: emptied(m, bins) };
  const { data, gammaHeld, globals } = off;
  const tol = options.tolerance ?? 1e-9;
  const P = m.nDense;
  const G = m.nGamma;
  const k = bins.length;
  const { ws, d, trialPhi, trialGamma, eliminate } = scratch;
  const sizes = bins.map(({ sample, bin }) => templateSize(m, sample, bin));
  const phi = Float64Array.from(phi0);
  const gamma = Float64Array.from(gamma0);
  project(problem, phi, gamma);
  const c = new Float64Array(k);
  const J = new Float64Array(k * P);
  const J2 = new Float64Array(k * P);
  const cTrial = new Float64Array(k);
  const JTrial = new Float64Array(k * P);
  const J2Trial = new Float64Array(k * P);
  let lambda = new Float64Array(k);
  const trueNll = () => negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, ws, problem.globals);
  const fail = (iterations: number, crossing: { sample: number; bin: number }[] = []) => ({ ok: false, phi, gamma, nll: trueNll(), decrement: NaN, iterations, lambda, crossing });

  let F = negativeLogLikelihood(off.model, data, gammaHeld, phi, gamma, ws, globals);
  if (!Number.isFinite(F)) return fail(0);
  // The Lagrangian's curvature Σ λ_e ∇²A_e is left out once the multipliers start to change
  // sign from one step to the next (the steps then swing between two sides of the edge).
  let useLagrangian = true;
  for (let it = 0; it < 50; it++) {
    edgeConstraints(m, bins, phi, c, J, J2);
    chooseEliminated(off, phi, gamma, scratch);
    computeDerivatives(off.model, data, phi, gamma, eliminate, ws, d, true, false, globals);
    const free = freeSet(off, phi, d.g);
    const n = free.length;
    const H = new Float64Array(n * n);
    for (let a = 0; a < n; a++) {
      for (let b = 0; b < n; b++) H[a * n + b] = d.H[free[a] * P + free[b]];
      if (useLagrangian) for (let e = 0; e < k; e++) H[a * n + a] += lambda[e] * J2[e * P + free[a]];
    }
    const { factor } = factorDamped(H, n);
    if (!factor) return fail(it);
    // δ = −H⁻¹(g̃ + Jᵀλ'), with λ' from (J H⁻¹ Jᵀ) λ' = c − J H⁻¹ g̃, so that J δ = −c.
    const a0 = new Float64Array(n);
    for (let a = 0; a < n; a++) a0[a] = d.gReduced[free[a]];
    choleskySolve(factor, n, a0);
    const Z = new Float64Array(k * n);
    for (let e = 0; e < k; e++) {
      const z = Z.subarray(e * n, (e + 1) * n);
      for (let a = 0; a < n; a++) z[a] = J[e * P + free[a]];
      choleskySolve(factor, n, z);
    }
    const S = new Float64Array(k * k);
    const rhs = new Float64Array(k);
    for (let e = 0; e < k; e++) {
      rhs[e] = c[e];
      for (let a = 0; a < n; a++) rhs[e] -= J[e * P + free[a]] * a0[a];
      for (let f = 0; f < k; f++) {
        let s = 0;
        for (let a = 0; a < n; a++) s += J[e * P + free[a]] * Z[f * n + a];
        S[e * k + f] = s;
      }
    }
    const Sf = cholesky(S, k, 1e-12);
    if (Sf.failedAt >= 0) return fail(it);
    const lambdaNew = Float64Array.from(rhs);
    choleskySolve(Sf.L, k, lambdaNew);
    const deltaPhi = new Float64Array(P);
    for (let a = 0; a < n; a++) {
      let x = -a0[a];
      for (let e = 0; e < k; e++) x -= lambdaNew[e] * Z[e * n + a];
      deltaPhi[free[a]] = x;
    }
    const deltaGamma = new Float64Array(G);
    let gDelta = 0;
    let gammaPart = 0;
    for (let a = 0; a < n; a++) gDelta += d.gReduced[free[a]] * deltaPhi[free[a]];
    for (let g = 0; g < G; g++) {
      if (!eliminate[g]) continue;
      let s = d.gGamma[g];
      for (let a = 0; a < n; a++) s += d.Bt[g * P + free[a]] * deltaPhi[free[a]];
      deltaGamma[g] = -s / d.D[g];
      gammaPart += (d.gGamma[g] * d.gGamma[g]) / d.D[g];
    }
    let violation = 0;
    let cl1 = 0;
    for (let e = 0; e < k; e++) {
      violation = Math.max(violation, Math.abs(c[e]) / sizes[e]);
      cl1 += Math.abs(c[e]);
    }
    // δᵀH δ = −g̃·δ + λ'·c on the reduced system, plus the eliminated γ part.
    let lc = 0;
    for (let e = 0; e < k; e++) lc += lambdaNew[e] * c[e];
    const dec = 0.5 * (-gDelta + lc + gammaPart);
    if (it > 1) for (let e = 0; e < k; e++) if (lambdaNew[e] * lambda[e] < 0) useLagrangian = false;
    lambda = lambdaNew;
    if (dec < tol && violation < 1e-12) return { ok: true, phi, gamma, nll: trueNll(), decrement: dec, iterations: it, lambda, crossing: [] };

    // ℓ1 merit F + ρ Σ|A_e| with ρ above every |λ|; its directional derivative is g·δ − ρ Σ|c|.
    let rho = 1;
    for (let e = 0; e < k; e++) rho = Math.max(rho, 2 * Math.abs(lambdaNew[e]));
    let slope = -rho * cl1;
    for (let i = 0; i < P; i++) slope += d.g[i] * deltaPhi[i];
    for (let g = 0; g < G; g++) slope += d.gGamma[g] * deltaGamma[g];
    const merit0 = F + rho * cl1;
    let alpha = 1;
    let accepted = false;
    for (let ls = 0; ls < 40; ls++) {
      for (let i = 0; i < P; i++) trialPhi[i] = phi[i] + alpha * deltaPhi[i];
      for (let g = 0; g < G; g++) trialGamma[g] = gamma[g] + alpha * deltaGamma[g];
      project(off, trialPhi, trialGamma);
      const Ft = negativeLogLikelihood(off.model, data, gammaHeld, trialPhi, trialGamma, ws, globals);
      edgeConstraints(m, bins, trialPhi, cTrial, JTrial, J2Trial);
      let ct = 0;
      for (let e = 0; e < k; e++) ct += Math.abs(cTrial[e]);
      const merit = Ft + rho * ct;
      if (Number.isFinite(merit) && merit <= merit0 + 1e-4 * alpha * Math.min(slope, 0) + 1e-13 * (1 + Math.abs(merit0))) {
        phi.set(trialPhi);
        gamma.set(trialGamma);
        F = Ft;
        accepted = true;
        break;
      }
      alpha *= 0.5;
    }
    if (!accepted) {
      negativeLogLikelihood(off.model, data, gammaHeld, phi, gamma, ws, globals);
      if (dec < roundingOf(off, ws, F) && violation < 1e-9) return { ok: true, phi, gamma, nll: trueNll(), decrement: dec, iterations: it, lambda, crossing: [] };
      // Templates that change side along the full step: kinks of F the held set does not cover.
      const full = Float64Array.from(phi);
      const fullGamma = Float64Array.from(gamma);
      for (let i = 0; i < P; i++) full[i] += deltaPhi[i];
      for (let g = 0; g < G; g++) fullGamma[g] += deltaGamma[g];
      project(off, full, fullGamma);
      const held = new Set(bins.map(({ sample, bin }) => m.sampleBinStart[sample] + bin));
      return fail(it, crossingsBetween(problem, phi, gamma, full, fullGamma, scratch).filter(({ sample, bin }) => !held.has(m.sampleBinStart[sample] + bin)));
    }
  }
  return fail(50);
}

/**
 * Where leaving the edge lowers the NLL (step 2 above), the start of the released fit: the
 * held point with each such template moved 1e-6 of its size to the lower side, along Jᵀ/|J|²
 * (so that A_e changes by that amount to first order). Null when no side lowers the NLL.
 */
function releaseStart(problem: FitProblem, best: NewtonResult, held: Held, bins: { sample: number; bin: number }[], scratch: Scratch): Float64Array | null {
  const m = problem.model;
  const P = m.nDense;
  const { ws } = scratch;
  negativeLogLikelihood(m, problem.data, problem.gammaHeld, best.phi, best.gamma, ws, problem.globals);
  const c = new Float64Array(bins.length);
  const J = new Float64Array(bins.length * P);
  const J2 = new Float64Array(bins.length * P);
  edgeConstraints(m, bins, best.phi, c, J, J2);
  const start = Float64Array.from(best.phi);
  let any = false;
  bins.forEach(({ sample: s, bin: j }, e) => {
    const b = m.sampleFirstBin[s] + j;
    const nu = ws.nu[b];
    const n = problem.data[b];
    const w = nu > 0 ? 1 - n / nu : 1;
    const gi = m.binGamma[b];
    const gam = gi >= 0 && m.carriesVariance[m.sampleBinStart[s] + j] ? best.gamma[gi] : 1;
    const dNuDA = ws.c[s] * ws.E[s] * gam;
    const offSlope = held.lambda[e];
    const onSlope = -held.lambda[e] + w * dNuDA;
    const scale = 1e-9 * (1 + Math.abs(held.lambda[e]) + Math.abs(w * dNuDA));
    if (!(Math.min(offSlope, onSlope) < -scale)) return;
    let norm = 0;
    for (let p = 0; p < P; p++) norm += J[e * P + p] * J[e * P + p];
    if (!(norm > 0)) return;
    const move = (offSlope < onSlope ? -1 : 1) * NUDGE * templateSize(m, s, j) - c[e];
    for (let p = 0; p < P; p++) if (!problem.held[p]) start[p] += (move * J[e * P + p]) / norm;
    any = true;
  });
  return any ? start : null;
}
