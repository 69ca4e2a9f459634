// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, render } from '@testing-library/react';
import type { ReactNode } from 'react';
import { MemoryRouter } from 'react-router';
import { PlotLabelsProvider } from '../../src/components/charts/plot-label';
import { ScanChart } from '../../src/components/charts/scan-chart';
import { StackedChart } from '../../src/components/charts/stacked-chart';
import { GroupsView } from '../../src/features/fits/components/groups-view';
import { PullsView } from '../../src/features/fits/components/pulls-view';
import { convergedResult } from './fit-fixtures';

afterEach(() => cleanup());

const LABELS = { experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' };
const withLabels = (node: ReactNode) =>
  render(
    <MemoryRouter>
      <PlotLabelsProvider labels={LABELS}>{node}</PlotLabelsProvider>
    </MemoryRouter>,
  );
/** The plot-label line of every chart's own <svg> (legend swatches and glyphs are small SVGs of their own). */
const labelsIn = (container: HTMLElement) => [...container.querySelectorAll('svg text.plot-label')].map((t) => t.textContent);

describe('plot labels on the charts', () => {
  it('draws them inside the stacked chart’s SVG, so that a download carries them', () => {
    const { container } = withLabels(
      <StackedChart
        d={{ stage: 'Pre-fit', regionLabel: 'SR', observable: 'm', unit: 'GeV', edges: [0, 1, 2], layers: [{ key: 'b', label: 'Background', colour: '#3b6ea5', values: [10, 5] }], expected: [10, 5], band: null, bandInfo: { label: '±1σ', title: '', inMain: false }, data: [9, 6], dataLabel: 'Data', withheld: false }}
      />,
    );
    expect(labelsIn(container)).toEqual(['LANTERN Internal · 38 fb⁻¹ · 9 TeV']);
  });

  it('draws them on the scan, pulls and groups charts of a result', () => {
    const result = convergedResult();
    const scan = { parameter: 'mu', failure: null, bestFit: 1, error: 0.2, points: [0.6, 0.8, 1, 1.2, 1.4].map((v) => ({ value: v, q: ((v - 1) / 0.2) ** 2 })), crossings68: { low: 0.8, high: 1.2 }, crossings95: null };
    for (const node of [<ScanChart key="s" scan={scan} />, <PullsView key="p" result={result} />, <GroupsView key="g" result={result} />]) {
      const { container, unmount } = withLabels(node);
      expect(labelsIn(container).length, String(node.key)).toBeGreaterThan(0);
      expect(new Set(labelsIn(container))).toEqual(new Set(['LANTERN Internal · 38 fb⁻¹ · 9 TeV']));
      unmount();
    }
  });

  it('draws nothing outside an analysis', () => {
    const { container } = render(<StackedChart d={{ stage: 'Pre-fit', regionLabel: 'SR', observable: 'm', unit: null, edges: [0, 1], layers: [{ key: 'b', label: 'B', colour: '#3b6ea5', values: [1] }], expected: [1], band: null, bandInfo: { label: '', title: '', inMain: false }, data: null, dataLabel: 'Data', withheld: false }} />);
    expect(labelsIn(container)).toEqual([]);
  });
});
