import { useMemo } from 'react';
import type { Model, Region } from '@shared/schemas/api';
import { StackedChart, type StackedChartData, type StackLayer } from '../../../components/charts/stacked-chart';
import { processColour } from '../../../lib/palette';

export type PrefitData = {
  layers: StackLayer[];
  expected: number[];
  /** variance of the expectation from limited template statistics, per bin; null when no template has variances */
  variance: number[] | null;
  observed: number[] | null;
};

/** The stack of a region: backgrounds in model order at the bottom, signal processes on top. */
export function prefitData(model: Model, region: Region): PrefitData {
  const bins = Math.max(0, region.edges.length - 1);
  const byProcess = new Map(model.templates.filter((t) => t.region === region.key).map((t) => [t.process, t]));
  const ordered = model.processes
    .map((p, index) => ({ p, index }))
    .sort((a, b) => (a.p.kind === b.p.kind ? a.index - b.index : a.p.kind === 'background' ? -1 : 1));
  const layers: StackLayer[] = [];
  let anyVariance = false;
  const expected = new Array<number>(bins).fill(0);
  const variance = new Array<number>(bins).fill(0);
  for (const { p, index } of ordered) {
    const t = byProcess.get(p.key);
    if (!t) continue;
    const values = Array.from({ length: bins }, (_, b) => t.nominal[b] ?? 0);
    values.forEach((v, b) => (expected[b] += v));
    if (t.variance) {
      anyVariance = true;
      t.variance.forEach((v, b) => b < bins && (variance[b] += v));
    }
    layers.push({ key: p.key, label: p.label || p.key, colour: processColour(index, p.colour), values });
  }
  return { layers, expected, variance: anyVariance ? variance : null, observed: region.observed };
}

/**
 * The pre-fit view of one region: the nominal templates stacked by process, the observed counts
 * as points with their Poisson interval, and below them observed / expected with the
 * template-statistics band.
 */
export function PrefitChart({ model, region }: { model: Model; region: Region }) {
  const d = useMemo(() => prefitData(model, region), [model, region]);
  const chart = useMemo<StackedChartData>(
    () => ({
      stage: 'Pre-fit',
      regionLabel: region.label || region.key,
      observable: region.observable,
      unit: region.unit,
      edges: region.edges,
      layers: d.layers,
      expected: d.expected,
      band: d.variance ? d.variance.map((v) => Math.sqrt(v)) : null,
      bandInfo: {
        label: 'Template statistics ±1σ',
        title: '±1σ of the expectation from limited template statistics (square root of the summed variances), in the ratio panel',
        inMain: false,
      },
      data: region.withheld ? null : d.observed,
      dataLabel: 'Observed',
      withheld: region.withheld,
    }),
    [d, region],
  );
  return <StackedChart d={chart} />;
}
