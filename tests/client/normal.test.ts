import { describe, expect, it } from 'vitest';
import { normalCdf, normalQuantile, normalSurvival, pFromZ, zFromP } from '../../src/lib/normal';

const expectClose = (actual: number, expected: number, relative = 1e-10) => expect(Math.abs(actual - expected)).toBeLessThanOrEqual(relative * Math.abs(expected));

// Reference values: Abramowitz & Stegun, Handbook of Mathematical Functions, table 26.1, and
// the one-sided 5σ tail 2.866515718791939e-7 quoted throughout the field's statistics reviews.
describe('the standard normal on the client', () => {
  it('gives Φ and its upper tail, keeping precision far into the tail', () => {
    expectClose(normalCdf(1), 0.8413447460685429);
    expectClose(normalCdf(-1.96), 0.024997895148220435);
    expectClose(normalSurvival(5), 2.866515718791939e-7);
    expectClose(normalSurvival(8), 6.22096057427178e-16, 1e-8);
    expect(normalCdf(0)).toBe(0.5);
  });

  it('inverts Φ and turns one-sided p-values into Z and back', () => {
    expectClose(normalQuantile(0.975), 1.959963984540054);
    expectClose(normalQuantile(0.5) + 1, 1);
    expectClose(zFromP(2.866515718791939e-7)!, 5, 1e-9);
    expectClose(zFromP(0.0013498980316301)!, 3, 1e-9);
    expectClose(pFromZ(zFromP(0.0062)!), 0.0062, 1e-12);
    expect(zFromP(0)).toBe(Infinity);
    expect(zFromP(null)).toBeNull();
    expect(zFromP(1.5)).toBeNull();
  });
});
