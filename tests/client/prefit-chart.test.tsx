// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, render, screen } from '@testing-library/react';
import type { Model } from '@shared/schemas/api';
import { PrefitChart, prefitData } from '../../src/features/model/components/prefit-chart';

afterEach(cleanup);

const model = (withheld: boolean): Model => ({
  regions: [
    { key: 'SR', label: 'Signal region', role: 'signal', observable: 'm', unit: 'GeV', edges: [0, 10, 20, 30], observed: withheld ? null : [12, 9, 4], withheld },
  ],
  processes: [
    { key: 'sig', label: 'Signal', kind: 'signal', colour: null },
    { key: 'bkg', label: 'Background', kind: 'background', colour: null },
  ],
  floatingNorms: [],
  parametersOfInterest: [],
  templates: [
    { region: 'SR', process: 'sig', nominal: [1, 3, 1], variance: null, floatingNorm: null },
    { region: 'SR', process: 'bkg', nominal: [10, 6, 3], variance: [1, 1, 1], floatingNorm: null },
  ],
});

describe('the pre-fit view of a region', () => {
  it('stacks backgrounds under the signal and sums the expectation per bin', () => {
    const d = prefitData(model(false), model(false).regions[0]);
    expect(d.layers.map((l) => l.key)).toEqual(['bkg', 'sig']);
    expect(d.expected).toEqual([11, 9, 4]);
    expect(d.variance).toEqual([1, 1, 1]);
  });

  it('draws the observed counts with their intervals when the data may be shown', () => {
    const m = model(false);
    render(<PrefitChart model={m} region={m.regions[0]} />);
    expect(screen.getByRole('img').getAttribute('aria-label')).toContain('25 observed');
    // one point in the main panel and one in the ratio panel per bin
    expect(screen.getByRole('img').querySelectorAll('circle')).toHaveLength(6);
    expect(screen.getByText('Observed (68 % Poisson interval)')).toBeTruthy();
  });

  it('shows no data while a blinded signal region is withheld, and says so', () => {
    const m = model(true);
    const { container } = render(<PrefitChart model={m} region={m.regions[0]} />);
    expect(container.querySelectorAll('circle')).toHaveLength(0);
    expect(screen.getByText('data withheld while blinded')).toBeTruthy();
    expect(screen.getByRole('img').getAttribute('aria-label')).toContain('withheld while blinded');
  });
});
