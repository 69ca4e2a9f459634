import type { FitParameter, NuisanceReport } from '@shared/schemas/fit';
import { cholesky, choleskyInverse } from './cholesky';
import type { FitContext } from './covariance';

/** σ_j = sqrt(V_jj); null for a held parameter. */
export function errorOf(ctx: FitContext, i: number): number | null {
  if (ctx.problem.held[i]) return null;
  const P = ctx.problem.model.nDense;
  return Math.sqrt(Math.max(0, ctx.V[i * P + i]));
}

export function isAtBound(value: number, lower: number, upper: number): boolean {
  const eps = 1e-8 * (1 + upper - lower);
  return value <= lower + eps || value >= upper - eps;
}

export function parameterTable(ctx: FitContext): FitParameter[] {
  const m = ctx.problem.model;
  return m.names.map((name, i) => ({
    name,
    label: m.labels[i],
    kind: m.kinds[i],
    group: m.groups[i],
    value: ctx.phi[i],
    error: errorOf(ctx, i),
    fixed: ctx.problem.held[i] === 1,
    atBound: !ctx.problem.held[i] && isAtBound(ctx.phi[i], m.lower[i], m.upper[i]),
  }));
}

/**
 * Per nuisance parameter, docs/likelihood.md §6: pull (θ̂ − a)/1 with a the constraint's centre (0 unless
 * the problem carries global observables), constraint σ̂/1 (flagged below the
 * threshold; common practice, no source), normalised pull (θ̂ − a)/sqrt(1 − σ̂²) for σ̂ < 1
 * (Demortier & Lyons, CDF note 5776, 2002) and the quick impact ρ(μ, θ) σ_μ = V_μθ / σ_θ.
 */
export function nuisanceTable(ctx: FitContext, threshold: number): NuisanceReport[] {
  const m = ctx.problem.model;
  const P = m.nDense;
  const muFree = !ctx.problem.held[0];
  const centre = ctx.problem.globals?.theta;
  const out: NuisanceReport[] = [];
  for (let i = m.thetaStart; i < P; i++) {
    const sigma = errorOf(ctx, i);
    const pull = centre ? ctx.phi[i] - centre[i] : ctx.phi[i];
    out.push({
      name: m.names[i],
      group: m.groups[i],
      fixed: ctx.problem.held[i] === 1,
      pull,
      constraint: sigma,
      overConstrained: sigma !== null && sigma < threshold,
      normalisedPull: sigma !== null && sigma < 1 ? pull / Math.sqrt(1 - sigma * sigma) : null,
      quickImpact: muFree && sigma !== null && sigma > 0 ? ctx.V[i] / sigma : null,
      postfitImpact: null,
      prefitImpact: null,
      rank: null,
    });
  }
  return out;
}

/** ρ_jk = V_jk / (σ_j σ_k) over the parameters in V (μ, k, θ), row-major. */
export function correlationMatrix(ctx: FitContext): { names: string[]; values: number[] } {
  const m = ctx.problem.model;
  const P = m.nDense;
  const idx = [...ctx.free];
  const values: number[] = [];
  for (const i of idx) {
    for (const j of idx) {
      const den = Math.sqrt(ctx.V[i * P + i] * ctx.V[j * P + j]);
      values.push(i === j ? 1 : den > 0 ? Math.max(-1, Math.min(1, ctx.V[i * P + j] / den)) : 0);
    }
  }
  return { names: idx.map((i) => m.names[i]), values };
}

/**
 * Statistical-only σ_μ: fix every θ and γ at the minimum, keep μ and k free, so
 * V_stat = (H_(μ,k),(μ,k))⁻¹ from the unreduced Hessian (docs/likelihood.md §6).
 */
export function statOnlyError(ctx: FitContext): number | null {
  const m = ctx.problem.model;
  if (ctx.problem.held[0]) return null;
  const nPk = m.thetaStart;
  const idx: number[] = [];
  for (let i = 0; i < nPk; i++) if (!ctx.problem.held[i]) idx.push(i);
  const n = idx.length;
  const A = new Float64Array(n * n);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) A[a * n + b] = ctx.pkBlock[idx[a] * nPk + idx[b]];
  const { L, failedAt } = cholesky(A, n, 1e-12);
  if (failedAt >= 0) return null;
  return Math.sqrt(choleskyInverse(L, n)[0]);
}

/**
 * Impact of a group G: sqrt(V_μG V_GG⁻¹ V_Gμ), the σ_μ² that fixing G at its best fit removes
 * (Schur complement, docs/likelihood.md §6).
 */
export function groupImpact(ctx: FitContext, members: number[]): number | null {
  const P = ctx.problem.model.nDense;
  const n = members.length;
  if (n === 0 || ctx.problem.held[0]) return null;
  const A = new Float64Array(n * n);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) A[a * n + b] = ctx.V[members[a] * P + members[b]];
  const { L, failedAt } = cholesky(A, n, 1e-14);
  if (failedAt >= 0) return null;
  const inv = choleskyInverse(L, n);
  let quad = 0;
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) quad += ctx.V[members[a]] * inv[a * n + b] * ctx.V[members[b]];
  return Math.sqrt(Math.max(0, quad));
}
