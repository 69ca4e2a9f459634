import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import { chiSquareCdf, chiSquareQuantile, chiSquareSurvival, logGamma, normalCdf, normalQuantile, normalSurvival } from '../../server/fit/distributions';
import { Q95 } from '../../server/fit/scan';
import { expectClose } from './helpers';

describe('normal and χ² distributions (docs/likelihood.md §8 check 5: against jstat 1.9.6 from the npm registry and the PDG table)', () => {
  it('agrees with jstat on the normal CDF and its inverse', () => {
    for (let z = -8; z <= 8; z += 0.37) expectClose(normalCdf(z), jStat.normal.cdf(z, 0, 1), 1e-6, 1e-15);
    for (const p of [1e-9, 1e-5, 0.001, 0.025, 0.1, 0.3, 0.5, 0.77, 0.975, 0.999]) expectClose(normalQuantile(p), jStat.normal.inv(p, 0, 1), 1e-7, 1e-9);
  });

  it('agrees with jstat on the χ² CDF and its inverse for 1 to 30 degrees of freedom', () => {
    for (const k of [1, 2, 3, 7, 30]) {
      for (const x of [0.01, 0.5, 1, 3.84, 10, 40]) expectClose(chiSquareCdf(x, k), jStat.chisquare.cdf(x, k), 1e-8, 1e-12);
      for (const p of [0.05, 0.5, 0.6827, 0.95]) expectClose(chiSquareQuantile(p, k), jStat.chisquare.inv(p, k), 1e-6);
    }
  });

  it('gives the one-sided tails of the 3σ and 5σ conventions: 1.35e-3 and 2.87e-7 (PDG Review of Particle Physics, Statistics chapter)', () => {
    expectClose(normalSurvival(3), 1.35e-3, 2e-3);
    expectClose(normalSurvival(5), 2.87e-7, 2e-3);
    // Deep in the tail the survival stays relatively accurate (no 1 − Φ cancellation).
    expectClose(normalSurvival(10), 7.619853024160527e-24, 1e-9);
  });

  it('puts the 68.27 % and 95 % crossings at q = 1.00 and 3.84 for one parameter, 2.30 and 5.99 for two (PDG, table of Δχ²)', () => {
    expectClose(chiSquareQuantile(0.6827, 1), 1.0, 0, 5e-4);
    expectClose(Q95, 3.84, 0, 5e-3);
    expectClose(Q95, jStat.chisquare.inv(0.95, 1), 1e-9);
    expectClose(chiSquareQuantile(0.683, 2), 2.3, 0, 5e-3);
    expectClose(chiSquareQuantile(0.95, 2), 5.99, 0, 5e-3);
    expectClose(chiSquareSurvival(1, 1), 1 - 0.6827, 0, 1e-4);
  });

  it('evaluates ln Γ like jstat (Lanczos coefficients)', () => {
    for (const x of [0.1, 0.5, 1, 2.5, 10, 100]) expectClose(logGamma(x), jStat.gammaln(x), 1e-12, 1e-13);
    expect(logGamma(0.5)).toBeCloseTo(Math.log(Math.sqrt(Math.PI)), 13);
  });
});
