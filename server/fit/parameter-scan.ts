import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptionsInput, type ParameterScan } from '@shared/schemas/fit';
import { curvatureAt } from './covariance';
import { FitInputError } from './errors';
import { Refitter } from './refit-tasks';
import { createScratch, minimise } from './minimiser';
import type { CompiledModel, FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import { buildProblem, startPoint } from './problem';
import { assembleScan, scanTasks } from './scan';

/** The best fit prepared for work on one parameter, or why there is none. */
export type BestFit =
  | { kind: 'unknown' }
  | { kind: 'none'; m: CompiledModel; index: number; failure: string }
  | { kind: 'fitted'; problem: FitProblem; m: CompiledModel; index: number; ctx: FitContext };

/**
 * The best fit of `model` with `options`, prepared for work on one parameter: its index and the
 * curvature context at the minimum. 'unknown' when `accept` refuses the name (or it is no
 * parameter), 'none' with the reason when the parameter is held or the fit fails.
 */
export function bestFitFor(model: ExchangeModel, optionsInput: FitOptionsInput, parameter: string, accept: (index: number, m: CompiledModel) => boolean): BestFit {
  const options = fitOptionsSchema.parse(optionsInput);
  const problem = buildProblem(model, options);
  const m = problem.model;
  const index = m.names.indexOf(parameter);
  if (index < 0 || !accept(index, m)) return { kind: 'unknown' };
  if (problem.held[index]) return { kind: 'none', m, index, failure: `${parameter} is held in this fit` };
  const scratch = createScratch(problem);
  const s0 = startPoint(m);
  const min = minimise(problem, s0.phi, s0.gamma, scratch);
  if (min.status === 'failed' || min.status === 'cancelled') return { kind: 'none', m, index, failure: min.message ?? 'the fit did not converge' };
  const curvature = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!curvature.ok) return { kind: 'none', m, index, failure: curvature.message };
  return { kind: 'fitted', problem, m, index, ctx: curvature.context };
}

/** 2ΔNLL against the parameter of a prepared best fit (all others refitted), or the reason there is none. */
export function scanFromBestFit(best: Exclude<BestFit, { kind: 'unknown' }>, parameter: string, points: number): ParameterScan {
  const { m, index } = best;
  if (best.kind === 'none') return { parameter, failure: best.failure, bestFit: m.start[index], error: null, points: [], crossings68: { low: null, high: null }, crossings95: null };
  const { grid, tasks } = scanTasks(best.ctx, 0, index, Math.max(3, points));
  const runner = new Refitter([best.ctx]);
  return assembleScan(best.ctx, index, grid, tasks.map((j) => runner.run(j)), []);
}

/**
 * 2ΔNLL against one parameter (all others refitted) with its q = 1 and q = 3.84 crossings, for
 * the diagnosis panel. Runs in the calling thread. A fit that fails gives a scan with its
 * failure and no points.
 */
export function scanParameter(model: ExchangeModel, optionsInput: FitOptionsInput, parameter: string, points = 21): ParameterScan {
  const best = bestFitFor(model, optionsInput, parameter, () => true);
  if (best.kind === 'unknown') throw new FitInputError(`unknown parameter "${parameter}"`, ['parameter']);
  return scanFromBestFit(best, parameter, points);
}
