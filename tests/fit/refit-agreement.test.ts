import { describe, expect, it } from 'vitest';
import { AGREEMENT_SLICE, checkRefitAgreement } from '../../server/fit/refit-agreement';
import { stressModel } from '../../server/fit/synthetic-stress';

/**
 * The seeded slice of the refit-agreement suite (docs/likelihood.md §10; the full set is
 * `npm run check:refits`): every impact, both crossings of both μ intervals and q0 of fitModel
 * against cold fits at the same fixed value, at the tolerances of docs/likelihood.md §8.
 */
describe('refits against cold fits', () => {
  for (const c of AGREEMENT_SLICE) {
    it(`agree on every impact, crossing and q0 of the ${c.label} model, with no empty output`, async () => {
      const row = await checkRefitAgreement(c.label, c.build());
      expect(row.status).toBe('converged');
      expect(row.referenceFailed).toBe(0);
      expect(row.compared).toBeGreaterThanOrEqual(20);
      expect(row.details).toEqual([]);
      expect(row.outOfTolerance).toBe(0);
      expect(row.empty).toBe(0);
      // every refit met the stop test on some rung
      expect(row.rungs.failed).toBe(0);
      expect(row.rungs.warm).toBeGreaterThan(0);
    }, 60_000);
  }

  it('counts an impact moved by twice its tolerance as out of tolerance, and a removed one as empty', async () => {
    const row = await checkRefitAgreement('stress tiny seed 2, altered', stressModel('tiny', 2), {
      adjust: (result) => {
        const [first, second] = result.nuisance.filter((n) => !n.fixed);
        const up = first.postfitImpact!.up!;
        first.postfitImpact!.up = up + 2 * Math.max(1e-5, 2e-3 * Math.abs(up));
        second.prefitImpact!.down = null;
      },
    });
    expect(row.outOfTolerance).toBe(1);
    expect(row.empty).toBe(1);
    expect(row.details.map((d) => d.what)).toEqual([expect.stringMatching(/post-fit \+$/), expect.stringMatching(/pre-fit − \(empty\)$/)]);
  }, 60_000);

  it('counts a crossing moved by 1 % of its offset as out of tolerance', async () => {
    const row = await checkRefitAgreement('stress tiny seed 1, crossing moved', stressModel('tiny', 1), {
      adjust: (result) => {
        const muHat = result.summary!.mu.value;
        const high = result.scan!.crossings68.high!;
        result.scan!.crossings68.high = high + 0.01 * (high - muHat);
      },
    });
    expect(row.outOfTolerance).toBe(1);
    expect(row.details[0].what).toMatch(/68 % high/);
  }, 60_000);
});
