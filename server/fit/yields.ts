import type { CompiledModel } from './compiled-model';
import { evenPart } from './interpolation';

/**
 * Expected yields, MODEL.md §3:
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
  };
}

const u = new Float64Array(3);

/** Fills the workspace at (φ, γ). With `all` false, samples outside the fit are skipped. */
export function evaluateYields(m: CompiledModel, phi: Float64Array, gamma: Float64Array, ws: Workspace, all = false): void {
  const { E, c, cMu, cK, A, shapeCoef, scaleD1, scaleD2 } = ws;
  for (let s = 0; s < m.nSamples; s++) {
    if (!all && !m.sampleInFit[s]) continue;
    // Scale effects: log-space interpolation.
    let logE = 0;
    for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) {
      const theta = phi[m.scaleParam[e]];
      evenPart(theta, u);
      const hd = m.scaleHd[e];
      const hs = m.scaleHs[e];
      logE += theta * hd + u[0] * hs;
      scaleD1[e] = hd + u[1] * hs;
      scaleD2[e] = u[2] * hs;
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
      const theta = phi[m.shapeParam[e]];
      evenPart(theta, u);
      const u0 = u[0];
      shapeCoef[4 * e] = theta;
      shapeCoef[4 * e + 1] = u0;
      shapeCoef[4 * e + 2] = u[1];
      shapeCoef[4 * e + 3] = u[2];
      const off = m.shapeOffset[e];
      for (let j = 0; j < nb; j++) A[sb0 + j] += theta * shapeHd[off + j] + u0 * shapeHs[off + j];
    }
  }
  applyGammas(m, gamma, ws, all);
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
