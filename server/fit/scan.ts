import type { ParameterScan } from '@shared/schemas/fit';
import type { FitContext } from './covariance';
import { chiSquareQuantile } from './distributions';
import type { RefitTask, RefitResult } from './refit-tasks';

/**
 * Profile-likelihood scan of one parameter: q(x) = 2[NLL(x, others refitted) − NLL_min],
 * on a grid of the minimum ± 3σ (within the bounds), and the crossings where q = 1 (68.27 %)
 * and q = χ²₁ quantile at 95 % = 3.8415 (Wilks; PDG Review of Particle Physics, Statistics
 * chapter, table of Δχ² for one parameter: 1.00 and 3.84), each located by its own root search.
 */
export const Q68 = 1;
export const Q95 = chiSquareQuantile(0.95, 1);

export function scanTasks(ctx: FitContext, context: number, index: number, points: number): { grid: number[]; tasks: RefitTask[] } {
  const m = ctx.problem.model;
  const P = m.nDense;
  const x0 = ctx.phi[index];
  const sigma = Math.sqrt(ctx.V[index * P + index]);
  const lo = Math.max(m.lower[index], x0 - 3 * sigma);
  const hi = Math.min(m.upper[index], x0 + 3 * sigma);
  const grid = Array.from({ length: points }, (_, k) => lo + ((hi - lo) * k) / (points - 1));
  const tasks: RefitTask[] = grid.map((value) => ({ kind: 'fix', context, index, value }));
  for (const level of [Q68, Q95]) for (const direction of [-1, 1] as const) tasks.push({ kind: 'crossing', context, index, level, direction });
  return { grid, tasks };
}

export function assembleScan(ctx: FitContext, index: number, grid: number[], results: RefitResult[], warnings: string[]): ParameterScan {
  const m = ctx.problem.model;
  const P = m.nDense;
  const name = m.names[index];
  const points = grid
    .map((value, k) => ({ value, r: results[k] }))
    .filter(({ r }) => r.ok && r.nll !== null)
    .map(({ value, r }) => ({ value, q: Math.max(0, 2 * (r.nll! - ctx.nll)) }));
  if (points.length < grid.length) warnings.push(`${grid.length - points.length} point(s) of the ${name} scan did not converge and are left out.`);
  const crossing = (k: number) => {
    const r = results[grid.length + k];
    if (!r.ok) warnings.push(`A crossing of the ${name} scan could not be located: ${r.message ?? 'a conditional fit failed'}.`);
    return r.ok ? r.value : null;
  };
  return {
    parameter: name,
    failure: null,
    bestFit: ctx.phi[index],
    error: Math.sqrt(ctx.V[index * P + index]),
    points,
    crossings68: { low: crossing(0), high: crossing(1) },
    crossings95: { low: crossing(2), high: crossing(3) },
  };
}
