import type { z } from 'zod';
import type { regionYieldsSchema } from '@shared/schemas/fit';
import type { CompiledModel } from './compiled-model';
import { covarianceTimesCoupling, type FitContext } from './covariance';
import { createWorkspace, evaluateYields, type Workspace } from './yields';

type RegionYields = z.infer<typeof regionYieldsSchema>;

/**
 * Expected yields per region, process and bin, with uncertainties by linear propagation
 * σ²(ν) = Jᵀ C J (common practice, no source):
 *  - pre-fit at the start point, C = the priors: 1 for each θ, σ_rb² for each γ, nothing for
 *    μ and k (unconstrained);
 *  - post-fit at the minimum, C = the full covariance. With γ eliminated, for a yield whose
 *    γ_b-derivative is J_γ, u = J_φ − h_b J_γ / D_b gives σ² = uᵀ V u + J_γ² / D_b.
 *    Parameters outside the fit keep their prior width (θ: 1, γ: σ_rb); μ held in a
 *    control-only fit contributes nothing.
 */

/** Dense accumulator for one Jacobian: a value per parameter and the parameters touched. */
interface Accumulator {
  dense: Float64Array;
  seen: Uint8Array;
}

const accumulators = new WeakMap<CompiledModel, Accumulator>();
function accumulatorFor(m: CompiledModel): Accumulator {
  let a = accumulators.get(m);
  if (!a) {
    a = { dense: new Float64Array(m.nDense), seen: new Uint8Array(m.nDense) };
    accumulators.set(m, a);
  }
  return a;
}

/** ∂ν_sb/∂φ (sparse: the sample's parameters, each once) and ∂ν_sb/∂γ. */
function sampleJacobian(m: CompiledModel, ws: Workspace, gamma: Float64Array, s: number, j: number, idx: number[], val: number[]): number {
  idx.length = 0;
  val.length = 0;
  const sb = m.sampleBinStart[s] + j;
  const A = ws.A[sb];
  if (A <= 0) return 0;
  const b = m.sampleFirstBin[s] + j;
  const gi = m.binGamma[b];
  const carries = gi >= 0 && m.carriesVariance[sb] === 1;
  const gam = carries ? gamma[gi] : 1;
  const E = ws.E[s];
  const Q = A * E;
  if (m.sampleSignal[s]) {
    idx.push(0);
    val.push(gam * ws.cMu[s] * Q);
  }
  if (m.sampleNorm[s] >= 0) {
    idx.push(m.sampleNorm[s]);
    val.push(gam * ws.cK[s] * Q);
  }
  // θ derivatives summed per parameter (a θ may have a shape and a scale effect on one template).
  const { dense, seen } = accumulatorFor(m);
  const first = idx.length;
  const cE = ws.c[s] * E * gam;
  for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
    const off = m.shapeOffset[e] + j;
    const p = m.shapeParam[e];
    if (!seen[p]) {
      seen[p] = 1;
      idx.push(p);
    }
    dense[p] += cE * (m.shapeHd[off] + ws.shapeCoef[4 * e + 2] * m.shapeHs[off]);
  }
  for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) {
    const p = m.scaleParam[e];
    if (!seen[p]) {
      seen[p] = 1;
      idx.push(p);
    }
    dense[p] += cE * A * ws.scaleD1[e];
  }
  for (let k = first; k < idx.length; k++) {
    const p = idx[k];
    val.push(dense[p]);
    dense[p] = 0;
    seen[p] = 0;
  }
  return carries ? ws.c[s] * Q : 0;
}

function regionShell(m: CompiledModel): RegionYields[] {
  return m.regions.map((r) => ({
    region: r.key,
    role: r.role,
    inFit: r.inFit,
    edges: r.edges,
    processes: r.samples.map((s) => ({ process: m.processes[m.sampleProcess[s]].key, values: [] as number[], errors: [] as number[] })),
    total: { values: [] as number[], errors: [] as number[] },
  }));
}

export function prefitYields(m: CompiledModel): RegionYields[] {
  const phi = Float64Array.from(m.start);
  for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 0;
  const gamma = new Float64Array(m.nGamma).fill(1);
  const ws = createWorkspace(m);
  evaluateYields(m, phi, gamma, ws, true);
  const out = regionShell(m);
  const idx: number[] = [];
  const val: number[] = [];
  const tot = new Float64Array(m.nDense);
  m.regions.forEach((r, ri) => {
    for (let j = 0; j < r.nBins; j++) {
      const b = r.firstBin + j;
      const gi = m.binGamma[b];
      const sigma = gi >= 0 ? m.gammaSigma[gi] : 0;
      tot.fill(0);
      let totGamma = 0;
      r.samples.forEach((s, k) => {
        const jg = sampleJacobian(m, ws, gamma, s, j, idx, val);
        // (jg·σ)², not jg²·σ²: a tiny yield with a huge relative width stays finite
        let v = (jg * sigma) ** 2;
        for (let a = 0; a < idx.length; a++) {
          if (idx[a] >= m.thetaStart) v += val[a] * val[a];
          tot[idx[a]] += val[a];
        }
        totGamma += jg;
        out[ri].processes[k].values.push(ws.nuSample[m.sampleBinStart[s] + j]);
        out[ri].processes[k].errors.push(Math.sqrt(v));
      });
      let v = (totGamma * sigma) ** 2;
      for (let i = m.thetaStart; i < m.nDense; i++) v += tot[i] * tot[i];
      out[ri].total.values.push(ws.nu[b]);
      out[ri].total.errors.push(Math.sqrt(v));
    }
  });
  return out;
}

export function postfitYields(ctx: FitContext): RegionYields[] {
  const { problem, V, Bt, D, eliminate, free } = ctx;
  const m = problem.model;
  const P = m.nDense;
  const ws = createWorkspace(m);
  evaluateYields(m, ctx.phi, ctx.gamma, ws, true);
  const out = regionShell(m);
  // Prior variance of parameters outside the fit (θ held for want of any dependence).
  const priorVar = new Float64Array(P);
  for (let i = m.thetaStart; i < P; i++) if (problem.held[i]) priorVar[i] = 1;
  const isFree = new Uint8Array(P);
  for (const i of free) isFree[i] = 1;
  const idx: number[] = [];
  const val: number[] = [];
  const y = new Float64Array(P);
  const VBt = covarianceTimesCoupling(ctx);
  const tot = new Float64Array(P);

  /** Jᵀ V J over the sparse (idx, val), plus the prior part of held parameters. */
  const quadV = (ix: number[], vx: number[]) => {
    let q = 0;
    for (let a = 0; a < ix.length; a++) {
      const i = ix[a];
      if (!isFree[i]) {
        q += vx[a] * vx[a] * priorVar[i];
        continue;
      }
      const row = i * P;
      let acc = 0;
      for (let c = 0; c < ix.length; c++) if (isFree[ix[c]]) acc += V[row + ix[c]] * vx[c];
      q += vx[a] * acc;
    }
    return q;
  };

  m.regions.forEach((r, ri) => {
    const params = [...r.parameters];
    for (let j = 0; j < r.nBins; j++) {
      const b = r.firstBin + j;
      const gi = m.binGamma[b];
      const elim = gi >= 0 && eliminate[gi] === 1;
      // y = V h_b and s = h_bᵀ V h_b for this bin's γ.
      let sHh = 0;
      if (elim) {
        const row = gi * P;
        y.set(VBt.subarray(row, row + P));
        for (let i = 0; i < P; i++) sHh += Bt[row + i] * y[i];
      }
      const gammaVar = (jg: number) => (gi < 0 ? 0 : elim ? 0 : (jg * m.gammaSigma[gi]) ** 2);
      tot.fill(0);
      let totGamma = 0;
      r.samples.forEach((s, k) => {
        const jg = sampleJacobian(m, ws, ctx.gamma, s, j, idx, val);
        let v = quadV(idx, val) + gammaVar(jg);
        if (elim && jg !== 0) {
          const c = jg / D[gi];
          let cross = 0;
          for (let a = 0; a < idx.length; a++) if (isFree[idx[a]]) cross += val[a] * y[idx[a]];
          v += -2 * c * cross + c * c * sHh + jg * c;
        }
        for (let a = 0; a < idx.length; a++) tot[idx[a]] += val[a];
        totGamma += jg;
        out[ri].processes[k].values.push(ws.nuSample[m.sampleBinStart[s] + j]);
        out[ri].processes[k].errors.push(Math.sqrt(Math.max(0, v)));
      });
      // Total of the bin: the same with the summed Jacobian.
      const tIdx: number[] = [];
      const tVal: number[] = [];
      for (const p of params) if (tot[p] !== 0) (tIdx.push(p), tVal.push(tot[p]));
      let v = quadV(tIdx, tVal) + gammaVar(totGamma);
      if (elim && totGamma !== 0) {
        const c = totGamma / D[gi];
        let cross = 0;
        for (let a = 0; a < tIdx.length; a++) if (isFree[tIdx[a]]) cross += tVal[a] * y[tIdx[a]];
        v += -2 * c * cross + c * c * sHh + totGamma * c;
      }
      out[ri].total.values.push(ws.nu[b]);
      out[ri].total.errors.push(Math.sqrt(Math.max(0, v)));
    }
  });
  return out;
}
