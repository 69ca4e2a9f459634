import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptionsInput, type ParameterScan } from '@shared/schemas/fit';
import { curvatureAt } from './covariance';
import { FitInputError } from './errors';
import { JobRunner } from './jobs';
import { createScratch, minimise } from './minimiser';
import { buildProblem, startPoint } from './problem';
import { assembleScan, scanJobs } from './scan';

/**
 * 2ΔNLL against one parameter (all others refitted) with its q = 1 and q = 3.84 crossings, for
 * the diagnosis panel. Runs in the calling thread. A fit that fails gives a scan with its
 * failure and no points.
 */
export function scanParameter(model: ExchangeModel, optionsInput: FitOptionsInput, parameter: string, points = 21): ParameterScan {
  const options = fitOptionsSchema.parse(optionsInput);
  const problem = buildProblem(model, options);
  const m = problem.model;
  const index = m.names.indexOf(parameter);
  if (index < 0) throw new FitInputError(`unknown parameter "${parameter}"`, ['parameter']);
  const empty = (failure: string): ParameterScan => ({ parameter, failure, bestFit: m.start[index], error: null, points: [], crossings68: { low: null, high: null }, crossings95: null });
  if (problem.held[index]) return empty(`${parameter} is held in this fit`);
  const scratch = createScratch(problem);
  const s0 = startPoint(m);
  const min = minimise(problem, s0.phi, s0.gamma, scratch);
  if (min.status === 'failed' || min.status === 'cancelled') return empty(min.message ?? 'the fit did not converge');
  const curvature = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!curvature.ok) return empty(curvature.message);
  const { grid, jobs } = scanJobs(curvature.context, 0, index, Math.max(3, points));
  const runner = new JobRunner([curvature.context]);
  return assembleScan(curvature.context, index, grid, jobs.map((j) => runner.run(j)), []);
}
