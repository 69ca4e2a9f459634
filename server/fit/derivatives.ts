import type { CompiledModel, GlobalObservables } from './compiled-model';
import type { Workspace } from './yields';

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
export interface Derivatives {
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
  a: Float64Array;
  a2: Float64Array;
  ell: Float64Array;
  ell2: Float64Array;
  omega: Float64Array;
  basis: Basis;
}

export function createDerivatives(m: CompiledModel): Derivatives {
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
    a: new Float64Array(P),
    a2: new Float64Array(P),
    ell: new Float64Array(P),
    ell2: new Float64Array(P),
    omega: new Float64Array(maxBins),
    basis: createBasis(m),
  };
}

/** Per region in the fit: the columns of B (see accumulateRegion) and where they land. */
interface RegionBasis {
  region: number;
  /** The region's dense parameters (sorted) and their number. */
  list: Int32Array;
  L: number;
  samples: Int32Array;
  /** Columns: one per sample, then one per θ with a shape effect in the region. */
  nCols: number;
  /** Local index (into list) of each shape column's θ. */
  shapeLocal: Int32Array;
}

interface Basis {
  regions: RegionBasis[];
  /** Per shape effect: its column in the region's basis. */
  shapeColumn: Int32Array;
  /** Per scale effect, and per sample for μ and k: the local index in the region's list (−1: none). */
  scaleLocal: Int32Array;
  sampleMuLocal: Int32Array;
  sampleKLocal: Int32Array;
  // Scratch sized for the largest region.
  normPos: Int32Array;
  y: Float64Array;
  z: Float64Array;
  eta: Float64Array;
  M: Float64Array;
  SM: Float64Array;
  colPtr: Int32Array;
  colIdx: Int32Array;
  colVal: Float64Array;
  C: Float64Array;
  Hl: Float64Array;
}

function createBasis(m: CompiledModel): Basis {
  const shapeColumn = new Int32Array(m.shapeParam.length).fill(-1);
  const scaleLocal = new Int32Array(m.scaleParam.length).fill(-1);
  const sampleMuLocal = new Int32Array(m.nSamples).fill(-1);
  const sampleKLocal = new Int32Array(m.nSamples).fill(-1);
  const regions: RegionBasis[] = [];
  let maxCols = 1;
  let maxL = 1;
  let maxNz = 1;
  m.regions.forEach((region, r) => {
    if (!region.inFit) return;
    const list = region.parameters;
    const local = new Map<number, number>();
    list.forEach((p, i) => local.set(p, i));
    const samples = Int32Array.from(region.samples.filter((s) => m.sampleInFit[s]));
    const shapeParams: number[] = [];
    const shapeCol = new Map<number, number>();
    let nz = 0;
    for (const s of samples) {
      if (m.sampleSignal[s]) sampleMuLocal[s] = local.get(0)!;
      if (m.sampleNorm[s] >= 0) sampleKLocal[s] = local.get(m.sampleNorm[s])!;
      nz += 2 + m.scalePtr[s + 1] - m.scalePtr[s];
      for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) scaleLocal[e] = local.get(m.scaleParam[e])!;
      for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
        const p = m.shapeParam[e];
        if (!shapeCol.has(p)) {
          shapeCol.set(p, samples.length + shapeParams.length);
          shapeParams.push(p);
        }
        shapeColumn[e] = shapeCol.get(p)!;
      }
    }
    const nCols = samples.length + shapeParams.length;
    nz += shapeParams.length;
    regions.push({ region: r, list, L: list.length, samples, nCols, shapeLocal: Int32Array.from(shapeParams.map((p) => local.get(p)!)) });
    maxCols = Math.max(maxCols, nCols);
    maxL = Math.max(maxL, list.length);
    maxNz = Math.max(maxNz, nz);
  });
  return {
    regions,
    shapeColumn,
    scaleLocal,
    sampleMuLocal,
    sampleKLocal,
    normPos: new Int32Array(m.thetaStart),
    y: new Float64Array(maxCols),
    z: new Float64Array(maxCols),
    eta: new Float64Array(maxCols),
    M: new Float64Array(maxCols * maxCols),
    SM: new Float64Array(maxCols * maxCols),
    colPtr: new Int32Array(maxCols + 1),
    colIdx: new Int32Array(maxNz),
    colVal: new Float64Array(maxNz),
    C: new Float64Array(maxCols * maxL),
    Hl: new Float64Array(maxL * maxL),
  };
}

/**
 * Gradient (and, when `hessian`, the reduced Hessian) at the point whose yields are in `ws`.
 * `eliminate[g]` = 1 for the γ that are free (they enter the Schur complement). The
 * constraints are centred on `globals` (nominal when left out); their centres move the
 * gradient only, never the Hessian.
 */
export function computeDerivatives(
  m: CompiledModel,
  data: Float64Array,
  phi: Float64Array,
  gamma: Float64Array,
  eliminate: Uint8Array,
  ws: Workspace,
  d: Derivatives,
  hessian: boolean,
  wantSchur = false,
  globals?: GlobalObservables,
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
      const shapeHd = m.shapeHd;
      const shapeHs = m.shapeHs;
      // Σ ω ∂A/∂θ = Σ ω hd + u' Σ ω hs and Σ ω ∂²A/∂θ² = u'' Σ ω hs (ω = 0 on clipped bins).
      // Two partial sums each (unrolled by two), so that the additions do not wait on each other.
      let shd = 0;
      let shs = 0;
      let shd2 = 0;
      let shs2 = 0;
      let j = 0;
      for (; j + 1 < nb; j += 2) {
        const om = omega[j];
        const om2 = omega[j + 1];
        shd += om * shapeHd[off + j];
        shs += om * shapeHs[off + j];
        shd2 += om2 * shapeHd[off + j + 1];
        shs2 += om2 * shapeHs[off + j + 1];
      }
      if (j < nb) {
        shd += omega[j] * shapeHd[off + j];
        shs += omega[j] * shapeHs[off + j];
      }
      shd += shd2;
      shs += shs2;
      a[p] += shd + u1 * shs;
      a2[p] += u2 * shs;
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

  // Constraints: (θ − a)²/2 and (γ − g)²/(2σ²), a = 0 and g = 1 unless given.
  const aTheta = globals?.theta;
  const gCentre = globals?.gamma;
  for (let i = m.thetaStart; i < P; i++) {
    g[i] += aTheta ? phi[i] - aTheta[i] : phi[i];
    if (hessian) H[i * P + i] += 1;
  }
  for (let gi = 0; gi < m.nGamma; gi++) {
    const b = m.gammaBin[gi];
    if (!m.binInFit[b]) continue;
    const s2 = m.gammaSigma[gi] * m.gammaSigma[gi];
    gGamma[gi] = w[b] * dNuDGamma[b] + (gamma[gi] - (gCentre ? gCentre[gi] : 1)) / s2;
  }

  if (!hessian) return;
  const schur = wantSchur ? d.schur : null;
  d.gReduced.set(g);
  for (const rb of d.basis.regions) accumulateRegion(m, gamma, eliminate, ws, d, rb, schur);
  mirrorUpper(H, P);
  if (schur) mirrorUpper(schur, P);
}

/**
 * The rank-one terms of one region, Σ_b [α_b ∇ν_b∇ν_bᵀ − h_b h_bᵀ/D_b], in a small basis.
 * With Q_sb = E_s A⁺_sb γ_sb and v_s = c_s ℓ_s + (∂c_s/∂μ) e_μ + (∂c_s/∂k) e_k (ℓ_s = ∇ln E_s,
 * the same for every bin of the sample),
 *   ∇ν_b = Σ_s Q_sb v_s + Σ_{shape θ} (Σ_s c_s E_s γ_sb ∂A_sb/∂θ) e_θ,
 * so every ∇ν_b, and likewise h_b, lies in the span of B = [v_s … | e_θ …]: one column per
 * sample of the region plus one per θ with a shape effect there (≈ 80 columns for ≈ 250
 * parameters). Per bin only the coefficients y_b (∇ν_b = B y_b) enter a small d×d matrix
 * M = Σ_b [α_b y_b y_bᵀ − η_b η_bᵀ/D_b]; the region then adds B M Bᵀ once, through C = M Bᵀ,
 * at a cost of (nonzeros of B) × (parameters of the region) instead of one L² outer product
 * per bin.
 */
function accumulateRegion(
  m: CompiledModel,
  gamma: Float64Array,
  eliminate: Uint8Array,
  ws: Workspace,
  d: Derivatives,
  rb: RegionBasis,
  schur: Float64Array | null,
): void {
  const P = m.nDense;
  const { H, gReduced, D, Bt, w, alpha, dNuDGamma, gGamma, basis } = d;
  const { list, L, samples, nCols: nc, shapeLocal } = rb;
  const nS = samples.length;
  const { y, z, eta, M, SM, colPtr, colIdx, colVal, C, Hl } = basis;

  // Sample columns v_s, by local parameter index within the region.
  let nz = 0;
  for (let si = 0; si < nS; si++) {
    const s = samples[si];
    colPtr[si] = nz;
    const c = ws.c[s];
    if (basis.sampleMuLocal[s] >= 0) {
      colIdx[nz] = basis.sampleMuLocal[s];
      colVal[nz++] = ws.cMu[s];
    }
    if (basis.sampleKLocal[s] >= 0) {
      colIdx[nz] = basis.sampleKLocal[s];
      colVal[nz++] = ws.cK[s];
    }
    for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) {
      colIdx[nz] = basis.scaleLocal[e];
      colVal[nz++] = c * ws.scaleD1[e];
    }
  }
  for (let k = 0; k < nc - nS; k++) {
    colPtr[nS + k] = nz;
    colIdx[nz] = shapeLocal[k];
    colVal[nz++] = 1;
  }
  colPtr[nc] = nz;

  M.fill(0, 0, nc * nc);
  if (schur) SM.fill(0, 0, nc * nc);
  const region = m.regions[rb.region];
  for (let j = 0; j < region.nBins; j++) {
    const b = region.firstBin + j;
    const al = alpha[b];
    const gi = m.binGamma[b];
    const elim = gi >= 0 && eliminate[gi] === 1;
    if (!elim && al === 0) continue;
    y.fill(0, 0, nc);
    if (elim) z.fill(0, 0, nc);
    let allCarry = true;
    // Coefficients of ∇ν_b (y) and of ∂∇ν_b/∂γ_b (z, templates that carry a variance).
    for (let si = 0; si < nS; si++) {
      const s = samples[si];
      const sb = m.sampleBinStart[s] + j;
      const A = ws.A[sb];
      if (A <= 0) continue;
      const carries = gi >= 0 && m.carriesVariance[sb] === 1;
      if (!carries) allCarry = false;
      const gam = carries ? gamma[gi] : 1;
      const E = ws.E[s];
      y[si] = gam * E * A;
      const withZ = elim && carries;
      if (withZ) z[si] = E * A;
      const cE = ws.c[s] * E;
      for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
        const off = m.shapeOffset[e] + j;
        const x = cE * (m.shapeHd[off] + ws.shapeCoef[4 * e + 2] * m.shapeHs[off]);
        const col = basis.shapeColumn[e];
        y[col] += gam * x;
        if (withZ) z[col] += x;
      }
    }
    if (elim) {
      // h_b = α_b (∂ν_b/∂γ_b) ∇ν_b + w_b ∂∇ν_b/∂γ_b, D_b = α_b (∂ν_b/∂γ_b)² + 1/σ_b².
      const s2 = m.gammaSigma[gi] * m.gammaSigma[gi];
      const dg = dNuDGamma[b];
      const Dg = al * dg * dg + 1 / s2;
      const invD = 1 / Dg;
      D[gi] = Dg;
      const wb = w[b];
      for (let i = 0; i < nc; i++) eta[i] = al * dg * y[i] + wb * z[i];
      if (allCarry && gamma[gi] > 0) {
        // Every template of the bin carries the γ: ∂∇ν_b/∂γ_b = ∇ν_b/γ_b, so η = κ y and the
        // two outer products are one, (α − κ²/D) y yᵀ.
        const kappa = al * dg + wb / gamma[gi];
        rankOne(M, nc, y, al - kappa * kappa * invD);
        if (schur) rankOne(SM, nc, y, kappa * kappa * invD);
      } else {
        for (let i = 0; i < nc; i++) {
          const x = al * y[i];
          const q = eta[i] * invD;
          if (x === 0 && q === 0) continue;
          const row = i * nc;
          for (let k = i; k < nc; k++) M[row + k] += x * y[k] - q * eta[k];
        }
        if (schur) for (let i = 0; i < nc; i++) if (eta[i] !== 0) rankOneRow(SM, nc, eta, i, eta[i] * invD);
      }
      // h_b = B η_b in the dense parameters: the γ coupling row, and g̃ −= h_b g_γb / D_b.
      const bt = gi * P;
      for (let i = 0; i < nc; i++) {
        const x = eta[i];
        if (x === 0) continue;
        for (let t = colPtr[i]; t < colPtr[i + 1]; t++) Bt[bt + list[colIdx[t]]] += x * colVal[t];
      }
      const gg = gGamma[gi] * invD;
      for (let ii = 0; ii < L; ii++) gReduced[list[ii]] -= Bt[bt + list[ii]] * gg;
    } else rankOne(M, nc, y, al);
  }
  addBasisProduct(M, nc, L, colPtr, colIdx, colVal, C, H, P, list, Hl);
  if (schur) addBasisProduct(SM, nc, L, colPtr, colIdx, colVal, C, schur, P, list, Hl);
}

/** Upper triangle of M += f x xᵀ. */
function rankOne(M: Float64Array, nc: number, x: Float64Array, f: number): void {
  if (f === 0) return;
  for (let i = 0; i < nc; i++) if (x[i] !== 0) rankOneRow(M, nc, x, i, f * x[i]);
}

/** Row i of the upper triangle of M += (f x_i) xᵀ. */
function rankOneRow(M: Float64Array, nc: number, x: Float64Array, i: number, fi: number): void {
  const row = i * nc;
  for (let k = i; k < nc; k++) M[row + k] += fi * x[k];
}

/**
 * Upper triangle of target += B M Bᵀ over the region's L parameters, M symmetric (upper
 * triangle given) and B in compressed columns with local row indices: first C = M Bᵀ (row j
 * of C is Σ_i M_ji B[:,i]), then row q of B M Bᵀ is Σ_j B_qj C_j. When the region touches
 * every parameter the rows go straight into the target; otherwise through a local block.
 */
function addBasisProduct(
  M: Float64Array,
  nc: number,
  L: number,
  colPtr: Int32Array,
  colIdx: Int32Array,
  colVal: Float64Array,
  C: Float64Array,
  target: Float64Array,
  P: number,
  list: Int32Array,
  Hl: Float64Array,
): void {
  for (let i = 0; i < nc; i++) for (let k = i + 1; k < nc; k++) M[k * nc + i] = M[i * nc + k];
  C.fill(0, 0, nc * L);
  for (let jc = 0; jc < nc; jc++) {
    const crow = jc * L;
    const mrow = jc * nc;
    for (let i = 0; i < nc; i++) {
      const mji = M[mrow + i];
      if (mji === 0) continue;
      for (let t = colPtr[i]; t < colPtr[i + 1]; t++) C[crow + colIdx[t]] += mji * colVal[t];
    }
  }
  const direct = L === P;
  const out = direct ? target : Hl;
  if (!direct) Hl.fill(0, 0, L * L);
  for (let jc = 0; jc < nc; jc++) {
    const crow = jc * L;
    for (let t = colPtr[jc]; t < colPtr[jc + 1]; t++) {
      const bq = colVal[t];
      const q = colIdx[t];
      const hrow = q * L;
      for (let p = q; p < L; p++) out[hrow + p] += bq * C[crow + p];
    }
  }
  if (direct) return;
  for (let ii = 0; ii < L; ii++) {
    const row = list[ii] * P;
    const lrow = ii * L;
    for (let jj = ii; jj < L; jj++) target[row + list[jj]] += Hl[lrow + jj];
  }
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

/**
 * The γ-reduced Hessian restricted to a few of the unconstrained parameters μ and k (`list`,
 * dense indices below thetaStart), written into Hq (q × q, row-major). It needs only the
 * per-bin weights a gradient evaluation leaves in `d`. μ and k enter each yield linearly, so
 * ∂²ν/∂μ² = ∂²ν/∂k² = 0 and ∂²ν/∂μ∂k = E A⁺ γ for a signal template that floats; the rest is
 * Σ_b [α_b ∂_pν_b ∂_qν_b − h_bp h_bq / D_b] as in the full Hessian, at O(bins × samples).
 */
export function normalisationHessian(
  m: CompiledModel,
  gamma: Float64Array,
  eliminate: Uint8Array,
  ws: Workspace,
  d: Derivatives,
  list: Int32Array,
  Hq: Float64Array,
  gq: Float64Array,
  rq: Float64Array,
): void {
  const q = list.length;
  Hq.fill(0, 0, q * q);
  const { w, alpha, dNuDGamma } = d;
  // Position of each dense index in list (−1 when not in it), for μ and the k.
  const pos = d.basis.normPos;
  pos.fill(-1);
  for (let a = 0; a < q; a++) pos[list[a]] = a;
  for (const region of m.regions) {
    if (!region.inFit) continue;
    for (let j = 0; j < region.nBins; j++) {
      const b = region.firstBin + j;
      const gi = m.binGamma[b];
      const elim = gi >= 0 && eliminate[gi] === 1;
      gq.fill(0, 0, q);
      rq.fill(0, 0, q);
      for (const s of region.samples) {
        const sb = m.sampleBinStart[s] + j;
        const A = ws.A[sb];
        if (A <= 0) continue;
        const carries = gi >= 0 && m.carriesVariance[sb] === 1;
        const gam = carries ? gamma[gi] : 1;
        const Q = ws.E[s] * A;
        const pm = m.sampleSignal[s] ? pos[0] : -1;
        const pk = m.sampleNorm[s] >= 0 ? pos[m.sampleNorm[s]] : -1;
        if (pm >= 0) {
          gq[pm] += gam * ws.cMu[s] * Q;
          if (carries) rq[pm] += ws.cMu[s] * Q;
        }
        if (pk >= 0) {
          gq[pk] += gam * ws.cK[s] * Q;
          if (carries) rq[pk] += ws.cK[s] * Q;
        }
        if (pm >= 0 && pk >= 0) {
          const x = w[b] * gam * Q;
          Hq[pm * q + pk] += x;
          Hq[pk * q + pm] += x;
        }
      }
      const al = alpha[b];
      for (let a = 0; a < q; a++) for (let c = 0; c < q; c++) Hq[a * q + c] += al * gq[a] * gq[c];
      if (elim) {
        const s2 = m.gammaSigma[gi] * m.gammaSigma[gi];
        const dg = dNuDGamma[b];
        const invD = 1 / (al * dg * dg + 1 / s2);
        for (let a = 0; a < q; a++) rq[a] = al * dg * gq[a] + w[b] * rq[a];
        for (let a = 0; a < q; a++) for (let c = 0; c < q; c++) Hq[a * q + c] -= rq[a] * rq[c] * invD;
      }
    }
  }
}
