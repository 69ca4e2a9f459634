import type { CompiledModel, GlobalObservables } from './compiled-model';
import { evaluateYields, type Workspace } from './yields';

/**
 * docs/likelihood.md §4, −ln L up to a constant so that a perfect fit scores 0:
 *   NLL = Σ_rb [ν − n + n ln(n/ν)] + Σ_i (θ_i − a_i)²/2 + Σ_rb (γ_rb − g_rb)² / (2σ_rb²)
 * with n ln(n/ν) := 0 for n = 0 and the global observables a = 0, g = 1 unless given. A bin with ν ≤ 0 and n > 0 gives +Infinity (never NaN), so
 * a line search can step back from it.
 */

/**
 * Poisson part of one bin (Baker & Cousins, NIM 221 (1984) 437: the saturated-model term). With
 * n = 0 it is ν itself, whatever its sign (a negative μ can take a bin's sum below zero): linear
 * and smooth there, as its derivatives (derivatives.ts) take it, with no kink at ν = 0.
 */
export function poissonTerm(nu: number, n: number): number {
  if (n > 0) return nu > 0 ? nu - n + n * Math.log(n / nu) : Infinity;
  return nu;
}

/** Σ over bins in the fit of the Poisson term at the yields held in the workspace. */
export function poissonSum(m: CompiledModel, data: Float64Array, ws: Workspace): number {
  let sum = 0;
  for (let b = 0; b < m.nBins; b++) if (m.binInFit[b]) sum += poissonTerm(ws.nu[b], data[b]);
  return sum;
}

/** Gaussian constraint terms of θ and γ, centred on the global observables (nominal when left out). */
export function constraintSum(m: CompiledModel, phi: Float64Array, gamma: Float64Array, gammaHeld: Uint8Array, globals?: GlobalObservables): number {
  let sum = 0;
  if (globals) {
    const a = globals.theta;
    for (let i = m.thetaStart; i < m.nDense; i++) {
      const d = phi[i] - a[i];
      sum += 0.5 * d * d;
    }
  } else for (let i = m.thetaStart; i < m.nDense; i++) sum += 0.5 * phi[i] * phi[i];
  const centre = globals?.gamma;
  for (let g = 0; g < m.nGamma; g++) {
    if (gammaHeld[g]) continue;
    const d = (gamma[g] - (centre ? centre[g] : 1)) / m.gammaSigma[g];
    sum += 0.5 * d * d;
  }
  return sum;
}

export function negativeLogLikelihood(
  m: CompiledModel,
  data: Float64Array,
  gammaHeld: Uint8Array,
  phi: Float64Array,
  gamma: Float64Array,
  ws: Workspace,
  globals?: GlobalObservables,
): number {
  evaluateYields(m, phi, gamma, ws);
  return poissonSum(m, data, ws) + constraintSum(m, phi, gamma, gammaHeld, globals);
}
