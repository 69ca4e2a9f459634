import type { CompiledModel } from '../../server/fit/compiled-model';
import type { Workspace } from '../../server/fit/yields';

/**
 * Reference assembly of the γ-reduced Hessian: the rank-one terms are added bin by bin as
 * dense L×L outer products over the region's parameters. Slower than the basis form in
 * server/fit/derivatives.ts but written straight from the formulas, so the tests hold the
 * engine to it.
 */
/**
 * Analytic gradient and Hessian of the NLL (docs/likelihood.md §5), with the γ block eliminated.
 *
 * Poisson part: ∂NLL/∂φ = Σ_b w_b ∂ν_b/∂φ with w_b = 1 − n_b/ν_b, and
 *   H = Σ_b (n_b/ν_b²) ∇ν_b ∇ν_bᵀ + Σ_b w_b ∇²ν_b.
 * Each sample's yield is ν = c·γ·E·A⁺ (c = μ·k, E = exp Σ I_scale, A = ν0 + Σ I_shape), so the
 * w_b ∇²ν_b term, and the gradient, can be summed over a sample's bins first: with
 * ω_b = w_b γ_b, a_i = Σ_b ω_b ∂A_b/∂θ_i, a2_i = Σ_b ω_b ∂²A_b/∂θ_i², T = Σ_b ω_b A_b and
 * ℓ_j = ∂ln E/∂θ_j,
 *   ∂NLL/∂θ  ⟵ cE (a + Tℓ),          ∂NLL/∂μ ⟵ (c/μ) E T,
 *   ∂²/∂θ∂θ' ⟵ cE [a ℓᵀ + ℓ aᵀ + T ℓℓᵀ + diag(a2 + T ℓ')],
 *   ∂²/∂μ∂θ ⟵ (c/μ) E (a + Tℓ),       ∂²/∂μ∂k ⟵ E T.
 * Only the rank-one term (n/ν²)∇ν∇νᵀ needs a pass per bin.
 *
 * γ elimination (Schur complement): each γ_b touches one bin, so with h_b = ∂²NLL/∂γ_b∂φ and
 * D_b = ∂²NLL/∂γ_b² the reduced system over φ = (μ, k, θ) is
 *   H̃ = H_φφ − Σ_b h_b h_bᵀ / D_b,   g̃ = g_φ − Σ_b h_b g_γb / D_b,
 * whose inverse is exactly the (μ, k, θ) block of the full inverse.
 */
export interface ReferenceDerivatives {
  /** ∂NLL/∂φ over the dense parameters. */
  g: Float64Array;
  /** ∂NLL/∂γ. */
  gGamma: Float64Array;
  /** Reduced Hessian H̃ (row-major, nDense²), filled when the Hessian is requested. */
  H: Float64Array;
  /** Reduced gradient g̃. */
  gReduced: Float64Array;
  /** D_b for every eliminated γ (0 for the others). */
  D: Float64Array;
  /** h_b rows (nGamma × nDense). */
  Bt: Float64Array;
  /** Σ h hᵀ / D, filled only on request (to recover the unreduced block). */
  schur: Float64Array | null;

  // Scratch.
  w: Float64Array;
  alpha: Float64Array;
  dNuDGamma: Float64Array;
  gb: Float64Array;
  rb: Float64Array;
  h: Float64Array;
  a: Float64Array;
  a2: Float64Array;
  ell: Float64Array;
  ell2: Float64Array;
  omega: Float64Array;
  blocks: Partial<Record<'Hl' | 'Sl' | 'gl' | 'hl', Float64Array>>;
}

export function createReferenceDerivatives(m: CompiledModel): ReferenceDerivatives {
  const P = m.nDense;
  let maxBins = 1;
  for (const r of m.regions) maxBins = Math.max(maxBins, r.nBins);
  return {
    g: new Float64Array(P),
    gGamma: new Float64Array(m.nGamma),
    H: new Float64Array(P * P),
    gReduced: new Float64Array(P),
    D: new Float64Array(m.nGamma),
    Bt: new Float64Array(m.nGamma * P),
    schur: null,
    w: new Float64Array(m.nBins),
    alpha: new Float64Array(m.nBins),
    dNuDGamma: new Float64Array(m.nBins),
    gb: new Float64Array(P),
    rb: new Float64Array(P),
    h: new Float64Array(P),
    a: new Float64Array(P),
    a2: new Float64Array(P),
    ell: new Float64Array(P),
    ell2: new Float64Array(P),
    omega: new Float64Array(maxBins),
    blocks: {},
  };
}

/**
 * Gradient (and, when `hessian`, the reduced Hessian) at the point whose yields are in `ws`.
 * `eliminate[g]` = 1 for the γ that are free (they enter the Schur complement).
 */
export function referenceDerivatives(
  m: CompiledModel,
  data: Float64Array,
  phi: Float64Array,
  gamma: Float64Array,
  eliminate: Uint8Array,
  ws: Workspace,
  d: ReferenceDerivatives,
  hessian: boolean,
  wantSchur = false,
): void {
  const P = m.nDense;
  const { g, gGamma, H, w, alpha, dNuDGamma, a, a2, ell, ell2, omega } = d;
  g.fill(0);
  gGamma.fill(0);
  dNuDGamma.fill(0);
  if (hessian) {
    H.fill(0);
    d.D.fill(0);
    d.Bt.fill(0);
    if (wantSchur) d.schur = d.schur ? (d.schur.fill(0), d.schur) : new Float64Array(P * P);
  }

  // Per-bin weights w = 1 − n/ν and α = n/ν².
  for (let b = 0; b < m.nBins; b++) {
    if (!m.binInFit[b]) continue;
    const nu = ws.nu[b];
    const n = data[b];
    if (n > 0 && nu > 0) {
      w[b] = 1 - n / nu;
      alpha[b] = n / (nu * nu);
    } else {
      w[b] = 1; // n = 0 (a bin with n > 0 and ν ≤ 0 never reaches here: its NLL is infinite)
      alpha[b] = 0;
    }
  }

  // Sample-aggregated terms.
  for (let s = 0; s < m.nSamples; s++) {
    if (!m.sampleInFit[s]) continue;
    const E = ws.E[s];
    const c = ws.c[s];
    const nb = m.sampleNBins[s];
    const sb0 = m.sampleBinStart[s];
    const b0 = m.sampleFirstBin[s];
    let T = 0;
    for (let j = 0; j < nb; j++) {
      const A = ws.A[sb0 + j];
      if (A <= 0) {
        omega[j] = 0; // clipped: ν and its derivatives vanish on this side of the edge
        continue;
      }
      const b = b0 + j;
      let om = w[b];
      if (m.carriesVariance[sb0 + j]) {
        const gi = m.binGamma[b];
        if (gi >= 0) {
          om *= gamma[gi];
          dNuDGamma[b] += c * E * A;
        }
      }
      omega[j] = om;
      T += om * A;
    }
    for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
      const p = m.shapeParam[e];
      const u1 = ws.shapeCoef[4 * e + 2];
      const u2 = ws.shapeCoef[4 * e + 3];
      const off = m.shapeOffset[e];
      let sa = 0;
      let sa2 = 0;
      for (let j = 0; j < nb; j++) {
        const om = omega[j];
        if (om === 0) continue;
        const hs = m.shapeHs[off + j];
        sa += om * (m.shapeHd[off + j] + u1 * hs);
        sa2 += om * u2 * hs;
      }
      a[p] += sa;
      a2[p] += sa2;
    }
    for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) {
      ell[m.scaleParam[e]] += ws.scaleD1[e];
      ell2[m.scaleParam[e]] += ws.scaleD2[e];
    }
    const f = c * E;
    const pStart = m.sampleParamPtr[s];
    const pEnd = m.sampleParamPtr[s + 1];
    for (let ii = pStart; ii < pEnd; ii++) {
      const p = m.sampleParams[ii];
      g[p] += f * (a[p] + T * ell[p]);
    }
    const mu = m.sampleSignal[s] === 1;
    const k = m.sampleNorm[s];
    if (mu) g[0] += ws.cMu[s] * E * T;
    if (k >= 0) g[k] += ws.cK[s] * E * T;

    if (hessian) {
      for (let ii = pStart; ii < pEnd; ii++) {
        const p = m.sampleParams[ii];
        const ap = a[p];
        const lp = ell[p];
        const row = p * P;
        for (let jj = ii; jj < pEnd; jj++) {
          const q = m.sampleParams[jj];
          H[row + q] += f * (ap * ell[q] + lp * a[q] + T * lp * ell[q]);
        }
        H[row + p] += f * (a2[p] + T * ell2[p]);
        const v = ap + T * lp;
        if (mu) H[p] += ws.cMu[s] * E * v;
        if (k >= 0) H[k * P + p] += ws.cK[s] * E * v;
      }
      if (mu && k >= 0) H[k] += E * T;
    }
    for (let ii = pStart; ii < pEnd; ii++) {
      const p = m.sampleParams[ii];
      a[p] = 0;
      a2[p] = 0;
      ell[p] = 0;
      ell2[p] = 0;
    }
  }

  // Constraints: θ²/2 and (γ − 1)²/(2σ²).
  for (let i = m.thetaStart; i < P; i++) {
    g[i] += phi[i];
    if (hessian) H[i * P + i] += 1;
  }
  for (let gi = 0; gi < m.nGamma; gi++) {
    const b = m.gammaBin[gi];
    if (!m.binInFit[b]) continue;
    const s2 = m.gammaSigma[gi] * m.gammaSigma[gi];
    gGamma[gi] = w[b] * dNuDGamma[b] + (gamma[gi] - 1) / s2;
  }

  if (!hessian) return;
  const { gb, rb, h, gReduced, D, Bt } = d;
  const schur = wantSchur ? d.schur : null;
  gReduced.set(g);
  // Per region, the rank-one updates run on a compact L×L block over the region's parameters
  // (contiguous memory), added into H once per region.
  for (const region of m.regions) {
    if (!region.inFit) continue;
    const list = region.parameters;
    const L = list.length;
    const Hl = localBlock(d, 'Hl', L * L);
    const Sl = schur ? localBlock(d, 'Sl', L * L) : null;
    const gl = localBlock(d, 'gl', L);
    const hl = localBlock(d, 'hl', L);
    for (let j = 0; j < region.nBins; j++) {
      const b = region.firstBin + j;
      const al = alpha[b];
      const gi = m.binGamma[b];
      const elim = gi >= 0 && eliminate[gi] === 1;
      if (!elim && al === 0) continue;
      binGradient(m, ws, gamma, region.samples, j, b, gb, elim ? rb : null);
      for (let ii = 0; ii < L; ii++) gl[ii] = gb[list[ii]];
      if (elim) {
        const s2 = m.gammaSigma[gi] * m.gammaSigma[gi];
        const dg = dNuDGamma[b];
        const Dg = al * dg * dg + 1 / s2;
        const invD = 1 / Dg;
        D[gi] = Dg;
        const gg = gGamma[gi] * invD;
        const wb = w[b];
        const bt = gi * P;
        for (let ii = 0; ii < L; ii++) {
          const p = list[ii];
          const hp = al * dg * gl[ii] + wb * rb[p];
          hl[ii] = hp;
          h[p] = hp;
          Bt[bt + p] = hp;
          gReduced[p] -= hp * gg;
        }
        for (let ii = 0; ii < L; ii++) {
          const x = al * gl[ii];
          const y = hl[ii] * invD;
          const row = ii * L;
          for (let jj = ii; jj < L; jj++) Hl[row + jj] += x * gl[jj] - y * hl[jj];
          if (Sl) for (let jj = ii; jj < L; jj++) Sl[row + jj] += y * hl[jj];
        }
      } else {
        for (let ii = 0; ii < L; ii++) {
          const x = al * gl[ii];
          const row = ii * L;
          for (let jj = ii; jj < L; jj++) Hl[row + jj] += x * gl[jj];
        }
      }
    }
    for (let ii = 0; ii < L; ii++) {
      const row = list[ii] * P;
      for (let jj = ii; jj < L; jj++) {
        H[row + list[jj]] += Hl[ii * L + jj];
        if (Sl && schur) schur[row + list[jj]] += Sl[ii * L + jj];
      }
    }
  }
  mirrorUpper(H, P);
  if (schur) mirrorUpper(schur, P);
}

/** A zeroed scratch block of the given size, kept on the derivatives object between calls. */
function localBlock(d: ReferenceDerivatives, key: 'Hl' | 'Sl' | 'gl' | 'hl', size: number): Float64Array {
  let block = d.blocks[key];
  if (!block || block.length < size) {
    block = new Float64Array(size);
    d.blocks[key] = block;
  } else block.fill(0, 0, size);
  return block;
}

function mirrorUpper(M: Float64Array, P: number): void {
  for (let i = 0; i < P; i++) for (let j = i + 1; j < P; j++) M[j * P + i] = M[i * P + j];
}

/**
 * ∇_φ ν_b for bin j of a region (written into gb over the region's parameters, which the
 * caller reads; other entries are left as they were) and, when rb is given, the same
 * gradient without the γ factor (∂²ν_b/∂γ∂φ).
 */
export function binGradient(
  m: CompiledModel,
  ws: Workspace,
  gamma: Float64Array,
  samples: number[],
  j: number,
  b: number,
  gb: Float64Array,
  rb: Float64Array | null,
): void {
  const region = m.regions[m.binRegion[b]];
  const list = region.parameters;
  for (let ii = 0; ii < list.length; ii++) {
    gb[list[ii]] = 0;
    if (rb) rb[list[ii]] = 0;
  }
  const gi = m.binGamma[b];
  for (const s of samples) {
    const sb = m.sampleBinStart[s] + j;
    const A = ws.A[sb];
    if (A <= 0) continue;
    const carries = gi >= 0 && m.carriesVariance[sb] === 1;
    const gam = carries ? gamma[gi] : 1;
    const r = carries ? rb : null;
    const E = ws.E[s];
    const c = ws.c[s];
    const Q = A * E;
    if (m.sampleSignal[s]) {
      const x = ws.cMu[s] * Q;
      gb[0] += gam * x;
      if (r) r[0] += x;
    }
    const k = m.sampleNorm[s];
    if (k >= 0) {
      const x = ws.cK[s] * Q;
      gb[k] += gam * x;
      if (r) r[k] += x;
    }
    const cE = c * E;
    for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
      const off = m.shapeOffset[e] + j;
      const x = cE * (m.shapeHd[off] + ws.shapeCoef[4 * e + 2] * m.shapeHs[off]);
      const p = m.shapeParam[e];
      gb[p] += gam * x;
      if (r) r[p] += x;
    }
    const cQ = c * Q;
    for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) {
      const x = cQ * ws.scaleD1[e];
      const p = m.scaleParam[e];
      gb[p] += gam * x;
      if (r) r[p] += x;
    }
  }
}
