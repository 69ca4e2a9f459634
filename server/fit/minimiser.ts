import { resolveEdge, type EdgeReport } from './clip-edge';
import type { FitProblem } from './compiled-model';
import { newtonLoop, type MinimiseOptions, type NewtonResult, type Scratch } from './newton';

/**
 * The minimiser of every fit (docs/likelihood.md §5): bounded Newton (newton.ts) and, where it stops on
 * a clip edge, the edge held and released (clip-edge.ts), keeping the lower NLL.
 */
export { clippedSampleBins, createScratch, EDGE_TOLERANCE, project, type MinimiseOptions, type Scratch } from './newton';
export type { EdgeReport } from './clip-edge';

export type MinimiseStatus = NewtonResult['status'];

export interface MinimiseResult extends NewtonResult {
  /** What happened on a clip edge (null when the loop did not stop on one). */
  edge: EdgeReport | null;
}

export function minimise(problem: FitProblem, phi0: Float64Array, gamma0: Float64Array, scratch: Scratch, options: MinimiseOptions = {}): MinimiseResult {
  const r = newtonLoop(problem, phi0, gamma0, scratch, options);
  if (r.status !== 'edge') return { ...r, edge: null };
  return resolveEdge(problem, r, scratch, options);
}
