import type { z } from 'zod';
import type { informationSchema } from '@shared/schemas/fit';
import type { FitContext } from './covariance';
import { binGradient } from './derivatives';
import { negativeLogLikelihood } from './likelihood';
import { createWorkspace } from './yields';

type Information = z.infer<typeof informationSchema>;

/** Bins carrying less than this share of a parameter's information are left out of its bin list. */
export const INFORMATION_BIN_SHARE = 1e-4;

/**
 * Information breakdown per nuisance parameter (docs/likelihood.md §6): per bin (∂ν_rb/∂θ_i)²/ν_rb at
 * the best fit (the Fisher information of a Poisson bin), summed per region, plus 1 from the
 * unit Gaussian constraint. 1/sqrt(total) is the width θ_i would have with no correlations.
 */
export function informationBreakdown(ctx: FitContext): Information[] {
  const m = ctx.problem.model;
  const P = m.nDense;
  const ws = createWorkspace(m);
  negativeLogLikelihood(m, ctx.problem.data, ctx.problem.gammaHeld, ctx.phi, ctx.gamma, ws, ctx.problem.globals);
  const nTheta = m.nDense - m.thetaStart;
  const perBin = new Float64Array(nTheta * m.nBins);
  const gb = new Float64Array(P);
  for (const region of m.regions) {
    if (!region.inFit) continue;
    for (let j = 0; j < region.nBins; j++) {
      const b = region.firstBin + j;
      const nu = ws.nu[b];
      if (!(nu > 0)) continue;
      binGradient(m, ws, ctx.gamma, region.samples, j, b, gb, null);
      for (const p of region.parameters) {
        if (p < m.thetaStart) continue;
        perBin[(p - m.thetaStart) * m.nBins + b] = (gb[p] * gb[p]) / nu;
      }
    }
  }
  const out: Information[] = [];
  for (let t = 0; t < nTheta; t++) {
    const i = m.thetaStart + t;
    if (ctx.problem.held[i]) continue;
    let poisson = 0;
    for (let b = 0; b < m.nBins; b++) poisson += perBin[t * m.nBins + b];
    const regions: Information['regions'] = [];
    for (const region of m.regions) {
      if (!region.inFit) continue;
      let sum = 0;
      const bins: { bin: number; information: number }[] = [];
      for (let j = 0; j < region.nBins; j++) {
        const v = perBin[t * m.nBins + region.firstBin + j];
        sum += v;
        if (v > 0 && v >= INFORMATION_BIN_SHARE * poisson) bins.push({ bin: j, information: v });
      }
      if (sum > 0) regions.push({ region: region.key, information: sum, bins });
    }
    const total = poisson + 1;
    out.push({ parameter: m.names[i], total, constraint: 1, width: 1 / Math.sqrt(total), regions });
  }
  return out;
}
