import { describe, expect, it } from 'vitest';
import { garwoodInterval, regularisedGammaP } from '../../src/lib/poisson';

const close = (a: number, b: number, tol = 1e-3) => expect(Math.abs(a - b)).toBeLessThan(tol);

describe('the Garwood interval of a Poisson count', () => {
  // Reference values: the 68.27 % central intervals tabulated by Gehrels, ApJ 303 (1986) 336, Tables 1–2 (S = 1).
  it.each([
    [0, 0, 1.841],
    [1, 0.173, 3.3],
    [2, 0.708, 4.638],
    [5, 2.84, 8.382],
    [10, 6.891, 14.267],
  ])('for n = %i is [%f, %f]', (n, lo, hi) => {
    const [a, b] = garwoodInterval(n);
    close(a, lo);
    close(b, hi);
  });

  it('approaches n ± √n for large counts', () => {
    const [a, b] = garwoodInterval(10_000);
    close(a, 9900, 1);
    close(b, 10_101, 1);
  });

  it('never reaches below zero', () => {
    for (let n = 0; n < 30; n++) expect(garwoodInterval(n)[0]).toBeGreaterThanOrEqual(0);
  });

  it('uses a regularised incomplete gamma that matches 1 − e^(−x) for a = 1', () => {
    for (const x of [0.1, 1, 3, 12]) close(regularisedGammaP(1, x), 1 - Math.exp(-x), 1e-12);
  });
});
