import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { hostileModel, hostileOptions, importable, judgeFit } from '../fuzz/models';

/**
 * The deterministic slice of the numerical part of `npm run fuzz`: hostile models that the
 * import accepts either fit or fail with a report, and no result carries a NaN or an infinity.
 */
describe('numerically hostile models', () => {
  it('fit, or fail with a report; every result number is finite', async () => {
    const statuses: Record<string, number> = {};
    await fc.assert(
      fc.asyncProperty(hostileModel, hostileOptions, async (input, options) => {
        const model = importable(input);
        if (!model) return;
        const { wrong, status } = await judgeFit(model, options);
        statuses[status] = (statuses[status] ?? 0) + 1;
        if (wrong) throw new Error(wrong);
      }),
      { numRuns: 60, seed: 20261202, endOnFailure: true },
    );
    // the generator must reach the engine, not only the schema's refusals
    expect(Object.values(statuses).reduce((a, b) => a + b, 0)).toBeGreaterThan(20);
  }, 300_000);
});
