import type { CompiledModel, FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import type { Scratch } from './newton';
import { outOfBounds, profiledNll } from './warm-refit';

/**
 * Two minima in one parameter. An effect whose variations lie on the same side of nominal has
 * an even part larger than its odd part, |hs| > |hd| in I(θ) = θ hd + u(θ) hs (docs/likelihood.md §2),
 * so the yield is not monotonic in θ, and the likelihood can have a minimum on either side of
 * θ = 0. A refit that follows the minimum from the best fit can then stay in one basin while a
 * fit from the start values (θ = 0) goes to the other, lower one, and the two disagree.
 * Two checks, both cheap where nothing is wrong:
 *  - a refit that moved a same-side parameter by more than 0.25 from the context's minimum
 *    is also fitted cold from that minimum (the lower NLL is kept, conditional-fit.ts);
 *  - every same-side parameter is mirrored, θ_j → −θ_j: u(θ) is even, so the mirror changes
 *    only the odd part of its effects (and, with shifted global observables, the constraint).
 *    Where F is lower there, the refit starts again from the mirrored point.
 */

const sameSide = new WeakMap<CompiledModel, Uint8Array>();

/** Parameters with at least one same-side effect (a scale effect or a bin of a shape effect). Once per compiled model. */
export function sameSideParameters(m: CompiledModel): Uint8Array {
  let out = sameSide.get(m);
  if (out) return out;
  out = new Uint8Array(m.nDense);
  for (let e = 0; e < m.scaleParam.length; e++) if (Math.abs(m.scaleHs[e]) > Math.abs(m.scaleHd[e])) out[m.scaleParam[e]] = 1;
  for (let s = 0; s < m.nSamples; s++) {
    for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
      const off = m.shapeOffset[e];
      for (let j = 0; j < m.sampleNBins[s]; j++) if (Math.abs(m.shapeHs[off + j]) > Math.abs(m.shapeHd[off + j])) out[m.shapeParam[e]] = 1;
    }
  }
  sameSide.set(m, out);
  return out;
}

/** Whether any parameter has a same-side effect. */
export function hasSameSide(m: CompiledModel): boolean {
  return sameSideParameters(m).some((f) => f === 1);
}

/** How far (in units of the prior width) a same-side parameter may move before the other basin is checked. */
const BISTABLE_MOVE = 0.25;
/** Same-side parameters closer to 0 than this are their own mirror. */
const MIRROR_MIN = 0.05;

export function movedBistable(ctx: FitContext, phi: Float64Array): boolean {
  const m = ctx.problem.model;
  const flags = sameSideParameters(m);
  for (let i = m.thetaStart; i < m.nDense; i++) if (flags[i] && Math.abs(phi[i] - ctx.phi[i]) > BISTABLE_MOVE) return true;
  return false;
}

/**
 * The mirrored points (θ_j → −θ_j for one same-side parameter j, not held) whose F is below
 * `nll`, lowest first, with γ profiled there. Empty for a model without same-side effects.
 */
export function mirroredStarts(ctx: FitContext, conditional: FitProblem, index: number, phi: Float64Array, gamma: Float64Array, nll: number, scratch: Scratch): { phi: Float64Array; gamma: Float64Array; F: number }[] {
  const m = ctx.problem.model;
  const flags = sameSideParameters(m);
  const out: { phi: Float64Array; gamma: Float64Array; F: number }[] = [];
  for (let j = m.thetaStart; j < m.nDense; j++) {
    if (!flags[j] || j === index || conditional.held[j] || Math.abs(phi[j]) < MIRROR_MIN) continue;
    const trial = Float64Array.from(phi);
    trial[j] = -phi[j];
    if (outOfBounds(conditional, trial)) continue;
    const g = Float64Array.from(gamma);
    const F = profiledNll(ctx.problem, trial, g, scratch);
    if (Number.isFinite(F) && F < nll - 1e-9 * (1 + Math.abs(nll))) out.push({ phi: trial, gamma: g, F });
  }
  return out.sort((a, b) => a.F - b.F);
}
