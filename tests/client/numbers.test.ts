import { describe, expect, it } from 'vitest';
import { formatNumberList, parseNumberList } from '../../src/lib/numbers';

describe('typed and pasted number lists', () => {
  it('reads commas, semicolons, tabs, spaces and new lines alike', () => {
    expect(parseNumberList('100, 120;140\t160\n180  200').values).toEqual([100, 120, 140, 160, 180, 200]);
  });

  it('names the first value that is not a number, counting from 1', () => {
    expect(parseNumberList('1, 2, x3, 4')).toEqual({ values: null, error: 'value 3 (“x3”) is not a number' });
    expect(parseNumberList('1, NaN').error).toContain('value 2');
    expect(parseNumberList('1, Infinity').error).toContain('value 2');
  });

  it('gives an empty list for empty text', () => {
    expect(parseNumberList('  \n ').values).toEqual([]);
  });

  it('writes a list back without floating-point noise', () => {
    expect(formatNumberList([0.1 + 0.2, 3, 1e-7])).toBe('0.3, 3, 1e-7');
  });
});
