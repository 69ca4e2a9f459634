import type { Model } from '@shared/schemas/api';
import type { FitPart, FitResultHead } from '@shared/schemas/fits';
import { formatEdge } from '../../lib/format';
import { processColour } from '../../lib/palette';
import type { StackedChartData } from './stacked-chart';

/** Which expectation of a fit a chart draws. */
export type FitStage = 'prefit' | 'postfit';
/** One region's yields in a fit's result. */
export type RegionYields = FitPart<'yields'>['prefit'][number];

/**
 * One region of a fit as the stacked chart draws it. Labels, colours, the observable and its unit
 * come from the model when it has the region and processes (the result names them by key).
 */
export function fitRegionChart(result: FitResultHead, y: RegionYields, stage: FitStage, model?: Model): StackedChartData {
  const region = model?.regions.find((r) => r.key === y.region);
  const procIndex = new Map((model?.processes ?? []).map((p, i) => [p.key, i]));
  const signal = (key: string) => model?.processes.find((p) => p.key === key)?.kind === 'signal';
  const layers = y.processes
    .map((p, i) => ({ p, i }))
    .sort((a, b) => Number(signal(a.p.process)) - Number(signal(b.p.process)) || a.i - b.i)
    .map(({ p, i }) => {
      const mp = model?.processes.find((q) => q.key === p.process);
      return { key: p.process, label: mp?.label || p.process, colour: processColour(procIndex.get(p.process) ?? i, mp?.colour), values: p.values };
    });
  const dataRegion = result.data.regions.find((d) => d.region === y.region);
  const values = dataRegion?.values ?? null;
  const asimov = result.data.dataset === 'asimov';
  return {
    stage: stage === 'prefit' ? 'Pre-fit' : 'Post-fit',
    regionLabel: region?.label || y.region,
    observable: region?.observable ?? 'observable',
    unit: region?.unit ?? null,
    edges: y.edges,
    layers,
    expected: y.total.values,
    band: y.total.errors,
    bandInfo: {
      label: stage === 'prefit' ? 'Pre-fit uncertainty ±1σ' : 'Post-fit uncertainty ±1σ',
      title:
        stage === 'prefit'
          ? '±1σ of the total expectation from the priors (θ: 1, γ: template statistics), propagated linearly; μ and the normalisations add nothing'
          : '±1σ of the total expectation from the fit’s full covariance, propagated linearly',
      inMain: true,
    },
    data: values,
    dataLabel: asimov ? `Asimov data (μ = ${formatEdge(result.data.asimovMu ?? 1)})` : 'Observed',
    withheld: values === null,
  };
}
