// @vitest-environment happy-dom
import { describe, expect, it } from 'vitest';
import { correlationSvg, layoutMatrix, parseRgb } from '../../src/features/fits/correlation-draw';
import { chartFileName } from '../../src/lib/chart-export';
import { correlationColour, theme } from '../../src/lib/palette';
import { decimalsFor, formatFixed, formatProbability, formatSigned } from '../../src/lib/stats-format';

describe('numbers of a fit result', () => {
  it('shows an error to two significant figures and the value to the same decimals', () => {
    expect(decimalsFor(0.426)).toBe(2);
    expect(decimalsFor(0.0123)).toBe(3);
    expect(decimalsFor(3.2)).toBe(1);
    expect(decimalsFor(null)).toBe(3);
  });

  it('writes signs with a real minus and never a negative zero', () => {
    expect(formatSigned(0.25, 2)).toBe('+0.25');
    expect(formatSigned(-0.25, 2)).toBe('−0.25');
    expect(formatSigned(-0.0001, 2)).toBe('0.00');
    expect(formatFixed(-0.0001, 3)).toBe('0.000');
    expect(formatFixed(null)).toBe('–');
  });

  it('writes small p-values in powers of ten', () => {
    expect(formatProbability(2.87e-7)).toBe('2.87 × 10⁻⁷');
    expect(formatProbability(0.0049)).toBe('0.0049');
    expect(formatProbability(0.25)).toBe('0.250');
  });
});

describe('the correlation picture', () => {
  const m = { names: ['mu', 'a<b', 'c'], values: [1, 0.5, -1, 0.5, 1, 0, -1, 0, 1] };

  it('gives readable cells with names for a small matrix and one-pixel cells without names for a large one', () => {
    const small = layoutMatrix([0, 1, 2]);
    expect(small.cell).toBe(32);
    expect(small.labelW).toBeGreaterThan(0);
    const large = layoutMatrix(Array.from({ length: 300 }, (_, i) => i));
    expect(large.cell).toBe(2);
    expect(large.labelW).toBe(0);
    expect(large.width).toBe(602);
  });

  it('exports one rectangle per cell in the scale’s colours, names escaped, group lines where asked', () => {
    const svg = correlationSvg(m, layoutMatrix([2, 0, 1], [1]));
    expect(svg.match(/<rect x=/g)).toHaveLength(9);
    expect(svg).toContain(`fill="${correlationColour(-1)}"`);
    expect(svg).toContain('a&lt;b');
    expect(svg.match(/<line /g)).toHaveLength(2);
    expect(new DOMParser().parseFromString(svg, 'image/svg+xml').querySelector('parsererror')).toBeNull();
  });

  it('reads the scale’s colours as numbers', () => {
    expect(parseRgb(theme.teal)).toEqual([14, 124, 116]);
    expect(parseRgb('rgb(255, 255, 255)')).toEqual([255, 255, 255]);
  });
});

describe('chart file names', () => {
  it('are the title in lower case with hyphens', () => {
    expect(chartFileName('Uncertainty on μ̂ by group', 'svg')).toBe('uncertainty-on-mu-by-group.svg');
    expect(chartFileName('Post-fit SR-core', 'png')).toBe('post-fit-sr-core.png');
  });
});
