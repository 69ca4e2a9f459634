import { describe, expect, it } from 'vitest';
import { correlationColour, processColour, processPalette, theme } from '../../src/lib/palette';

const rgb = (hex: string) => [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
const parse = (css: string) => (css.startsWith('#') ? rgb(css) : css.match(/\d+/g)!.slice(0, 3).map(Number));

describe('the palette', () => {
  it('maps correlation −1 to teal, 0 to white and +1 to plum, clamping beyond', () => {
    expect(parse(correlationColour(-1))).toEqual(rgb(theme.teal));
    expect(parse(correlationColour(0))).toEqual([255, 255, 255]);
    expect(parse(correlationColour(1))).toEqual(rgb(theme.plum));
    expect(parse(correlationColour(3))).toEqual(rgb(theme.plum));
  });

  it('has eight distinct process colours and falls back to them when a stored colour is missing or malformed', () => {
    expect(new Set(processPalette).size).toBe(8);
    expect(processColour(9)).toBe(processPalette[1]);
    expect(processColour(0, 'red')).toBe(processPalette[0]);
    expect(processColour(0, '#123abc')).toBe('#123abc');
  });
});
