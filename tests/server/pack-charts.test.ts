import { describe, expect, it } from 'vitest';
import { contourChart } from '../../server/pack/charts';

const labels = { experiment: 'Lantern', status: 'Internal', luminosity: '', energy: '' };
const contour = {
  parameters: ['mu', 'mu_assoc'] as [string, string],
  bestFit: [1, 0.7] as [number, number],
  a: [0.5, 1, 1.5],
  b: [0.2, 0.7, 1.2],
  levels: [
    { cl: 0.6827, lines: [[[0.8, 0.7], [1, 0.9], [1.2, 0.7], [1, 0.5], [0.8, 0.7]] as [number, number][]] },
    { cl: 0.95, lines: [[[0.6, 0.7], [1, 1.1], [1.4, 0.7], [1, 0.3], [0.6, 0.7]] as [number, number][]] },
  ],
};

describe('the approval pack contour chart', () => {
  it('names its axes with the labels it is given, and falls back to the keys', () => {
    const labelled = contourChart(contour, labels, 'Contour', ['μ', 'Associated strength & more']);
    expect(labelled).toContain('>μ<');
    expect(labelled).toContain('Associated strength &amp; more');
    expect(labelled).not.toContain('>mu_assoc<');
    const bare = contourChart(contour, labels, 'Contour');
    expect(bare).toContain('>mu_assoc<');
  });
});
