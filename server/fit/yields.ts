import type { CompiledModel } from './compiled-model';
import { evenPart } from './interpolation';

/**
 * Expected yields, docs/likelihood.md §3:
 *   ν_rpb = max(0, ν0 + Σ_shape I(θ; ν+ − ν0, ν− − ν0)) × Π_scale exp(I(θ; ln κ+, ln κ−))
 *           × μ (signal) × k (floating) × γ_rb (template carries a variance there)
 * The evaluation leaves in the workspace every intermediate the derivatives reuse:
 * per sample E = Π exp(I) and the linear factor c = μ·k; per sample-bin the additive
 * template A before the clip; per effect the interpolation coefficients at the current θ.
 */
export interface Workspace {
  E: Float64Array;
  c: Float64Array;
  /** c without its μ factor (∂c/∂μ) and without its k factor (∂c/∂k). */
  cMu: Float64Array;
  cK: Float64Array;
  A: Float64Array;
  nuSample: Float64Array;
  nu: Float64Array;
  /** Per shape effect: θ, u(θ), u'(θ), u''(θ) (see interpolation.ts). */
  shapeCoef: Float64Array;
  /** Per scale effect: dI/dθ and d²I/dθ² of the log-yield. */
  scaleD1: Float64Array;
  scaleD2: Float64Array;
  /** Per dense parameter: u(θ), u'(θ), u''(θ), computed once per evaluation (not once per effect). */
  u0: Float64Array;
  u1: Float64Array;
  u2: Float64Array;
}

export function createWorkspace(m: CompiledModel): Workspace {
  return {
    E: new Float64Array(m.nSamples),
    c: new Float64Array(m.nSamples),
    cMu: new Float64Array(m.nSamples),
    cK: new Float64Array(m.nSamples),
    A: new Float64Array(m.nominal.length),
    nuSample: new Float64Array(m.nominal.length),
    nu: new Float64Array(m.nBins),
    shapeCoef: new Float64Array(4 * m.shapeParam.length),
    scaleD1: new Float64Array(m.scaleParam.length),
    scaleD2: new Float64Array(m.scaleParam.length),
    u0: new Float64Array(m.nDense),
    u1: new Float64Array(m.nDense),
    u2: new Float64Array(m.nDense),
  };
}

const u = new Float64Array(3);

/**
 * Fills the workspace at (φ, γ). With `all` false, samples outside the fit are skipped. With
 * `withGammas` false, ν_sb and ν_b are left for applyGammas (γ profiling sets γ first).
 */
export function evaluateYields(m: CompiledModel, phi: Float64Array, gamma: Float64Array, ws: Workspace, all = false, withGammas = true): void {
  const { E, c, cMu, cK, A, shapeCoef, scaleD1, scaleD2, u0: uu0, u1: uu1, u2: uu2 } = ws;
  // The even part u(θ) of every nuisance parameter, once.
  for (let p = m.thetaStart; p < m.nDense; p++) {
    evenPart(phi[p], u);
    uu0[p] = u[0];
    uu1[p] = u[1];
    uu2[p] = u[2];
  }
  const scaleParam = m.scaleParam;
  const scaleHd = m.scaleHd;
  const scaleHs = m.scaleHs;
  for (let s = 0; s < m.nSamples; s++) {
    if (!all && !m.sampleInFit[s]) continue;
    // Scale effects: log-space interpolation.
    let logE = 0;
    for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) {
      const p = scaleParam[e];
      const hd = scaleHd[e];
      const hs = scaleHs[e];
      logE += phi[p] * hd + uu0[p] * hs;
      scaleD1[e] = hd + uu1[p] * hs;
      scaleD2[e] = uu2[p] * hs;
    }
    E[s] = Math.exp(logE);
    const mu = m.sampleSignal[s] ? phi[0] : 1;
    const k = m.sampleNorm[s] >= 0 ? phi[m.sampleNorm[s]] : 1;
    c[s] = mu * k;
    cMu[s] = k;
    cK[s] = mu;
    // Shape effects: additive per bin.
    const nb = m.sampleNBins[s];
    const sb0 = m.sampleBinStart[s];
    const nominal = m.nominal;
    for (let j = 0; j < nb; j++) A[sb0 + j] = nominal[sb0 + j];
    const shapeHd = m.shapeHd;
    const shapeHs = m.shapeHs;
    for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
      const p = m.shapeParam[e];
      const theta = phi[p];
      const u0 = uu0[p];
      shapeCoef[4 * e] = theta;
      shapeCoef[4 * e + 1] = u0;
      shapeCoef[4 * e + 2] = uu1[p];
      shapeCoef[4 * e + 3] = uu2[p];
      const off = m.shapeOffset[e];
      // Unrolled by four: the hottest loop of every evaluation (shape effects × bins).
      let j = 0;
      for (; j + 3 < nb; j += 4) {
        A[sb0 + j] += theta * shapeHd[off + j] + u0 * shapeHs[off + j];
        A[sb0 + j + 1] += theta * shapeHd[off + j + 1] + u0 * shapeHs[off + j + 1];
        A[sb0 + j + 2] += theta * shapeHd[off + j + 2] + u0 * shapeHs[off + j + 2];
        A[sb0 + j + 3] += theta * shapeHd[off + j + 3] + u0 * shapeHs[off + j + 3];
      }
      for (; j < nb; j++) A[sb0 + j] += theta * shapeHd[off + j] + u0 * shapeHs[off + j];
    }
  }
  if (withGammas) applyGammas(m, gamma, ws, all);
}

/** ν_sb = c E A⁺ γ and ν_b = Σ_s ν_sb from the per-sample factors already in the workspace. */
export function applyGammas(m: CompiledModel, gamma: Float64Array, ws: Workspace, all = false): void {
  const { E, c, A, nuSample, nu } = ws;
  nu.fill(0);
  for (let s = 0; s < m.nSamples; s++) {
    if (!all && !m.sampleInFit[s]) continue;
    const f = E[s] * c[s];
    const nb = m.sampleNBins[s];
    const sb0 = m.sampleBinStart[s];
    const b0 = m.sampleFirstBin[s];
    for (let j = 0; j < nb; j++) {
      const a = A[sb0 + j];
      let v = a > 0 ? a * f : 0;
      if (m.carriesVariance[sb0 + j]) {
        const g = m.binGamma[b0 + j];
        if (g >= 0) v *= gamma[g];
      }
      nuSample[sb0 + j] = v;
      nu[b0 + j] += v;
    }
  }
}
