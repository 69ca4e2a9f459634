import type { CompiledModel } from './compiled-model';
import { chiSquareSurvival, normalSurvival } from './distributions';
import { poissonTerm } from './likelihood';

/**
 * Discovery significance from q0 (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011)
 * 1554, arXiv:1007.1727): q0 = 2[NLL(μ = 0) − NLL(μ̂)] if μ̂ > 0, else 0; Z = √q0,
 * p0 = 1 − Φ(Z).
 */
export function discovery(q0: number): { q0: number; z: number; p0: number } {
  const q = Math.max(0, q0);
  const z = Math.sqrt(q);
  return { q0: q, z, p0: normalSurvival(z) };
}

/**
 * Saturated-model goodness of fit (Baker & Cousins, NIM 221 (1984) 437):
 * t = 2 Σ_rb [ν − n + n ln(n/ν)] at the best fit, p from χ² with
 * (bins − free unconstrained parameters) degrees of freedom.
 */
export function goodnessOfFit(m: CompiledModel, data: Float64Array, nu: Float64Array, held: Uint8Array): { t: number; dof: number; p: number | null } {
  let t = 0;
  let bins = 0;
  for (let b = 0; b < m.nBins; b++) {
    if (!m.binInFit[b]) continue;
    bins++;
    t += 2 * poissonTerm(nu[b], data[b]);
  }
  let unconstrained = 0;
  for (let i = 0; i < m.thetaStart; i++) if (!held[i]) unconstrained++;
  const dof = bins - unconstrained;
  return { t, dof, p: dof > 0 && Number.isFinite(t) ? chiSquareSurvival(t, dof) : null };
}
