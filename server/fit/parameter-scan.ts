import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptionsInput, type ParameterScan } from '@shared/schemas/fit';
import { curvatureAt } from './covariance';
import { FitInputError } from './errors';
import { JobRunner } from './jobs';
import { createScratch, minimise } from './minimiser';
import type { FitProblem } from './compiled-model';
import { buildProblem, startPoint } from './problem';
import { assembleScan, scanJobs } from './scan';

/**
 * 2ΔNLL against one parameter (all others refitted) with its q = 1 and q = 3.84 crossings, for
 * the diagnosis panel. Runs in the calling thread. A fit that fails gives a scan with its
 * failure and no points.
 */
/**
 * The best fit of `model` with `options`, prepared for work on one nuisance parameter: its
 * index and the curvature context at the minimum, or why there is none.
 */
export function bestFitFor(model: ExchangeModel, optionsInput: FitOptionsInput, parameter: string, accept: (index: number, m: FitProblem['model']) => boolean) {
  const options = fitOptionsSchema.parse(optionsInput);
  const problem = buildProblem(model, options);
  const m = problem.model;
  const index = m.names.indexOf(parameter);
  if (index < 0 || !accept(index, m)) return { problem, m, index, failure: null, ctx: null, unknown: true } as const;
  if (problem.held[index]) return { problem, m, index, failure: `${parameter} is held in this fit`, ctx: null, unknown: false } as const;
  const scratch = createScratch(problem);
  const s0 = startPoint(m);
  const min = minimise(problem, s0.phi, s0.gamma, scratch);
  if (min.status === 'failed' || min.status === 'cancelled') return { problem, m, index, failure: min.message ?? 'the fit did not converge', ctx: null, unknown: false } as const;
  const curvature = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!curvature.ok) return { problem, m, index, failure: curvature.message, ctx: null, unknown: false } as const;
  return { problem, m, index, failure: null, ctx: curvature.context, unknown: false } as const;
}

export function scanParameter(model: ExchangeModel, optionsInput: FitOptionsInput, parameter: string, points = 21): ParameterScan {
  const best = bestFitFor(model, optionsInput, parameter, () => true);
  if (best.unknown) throw new FitInputError(`unknown parameter "${parameter}"`, ['parameter']);
  const { m, index } = best;
  if (!best.ctx) return { parameter, failure: best.failure, bestFit: m.start[index], error: null, points: [], crossings68: { low: null, high: null }, crossings95: null };
  const { grid, jobs } = scanJobs(best.ctx, 0, index, Math.max(3, points));
  const runner = new JobRunner([best.ctx]);
  return assembleScan(best.ctx, index, grid, jobs.map((j) => runner.run(j)), []);
}
