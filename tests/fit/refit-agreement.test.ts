import { describe, expect, it } from 'vitest';
import { AGREEMENT_SLICE, checkRefitAgreement } from '../../server/fit/refit-agreement';
import { EDGE_SIZES, stressModel } from '../../server/fit/synthetic-stress';
import { conditionalFit } from '../../server/fit/conditional-fit';
import { curvatureAt } from '../../server/fit/covariance';
import { createScratch, minimise } from '../../server/fit/minimiser';
import { buildProblem, startPoint } from '../../server/fit/problem';
import { coldFit, REFERENCE_PROBLEM } from '../../server/fit/refit-reference';
import { Refitter } from '../../server/fit/refit-tasks';

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
    }, 180_000);
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

  it('on the low side too, and estimates the crossing where it was before the move (not mirrored)', async () => {
    let before = 0;
    const row = await checkRefitAgreement('stress tiny seed 1, low crossing moved', stressModel('tiny', 1), {
      adjust: (result) => {
        const muHat = result.summary!.mu.value;
        const low = result.scan!.crossings68.low!;
        before = low - muHat;
        result.scan!.crossings68.low = low + 0.01 * (low - muHat);
      },
    });
    expect(row.outOfTolerance).toBe(1);
    const d = row.details[0];
    expect(d.what).toMatch(/68 % low/);
    expect(d.engine).toBeCloseTo(1.01 * before, 12);
    // the first-order estimate lands back near the crossing as the engine had it (|offset| 1 % off)
    expect(Math.abs(d.reference - before)).toBeLessThan(1e-3 * Math.abs(before));
  }, 60_000);
});

/** A model's problem with the suite's options, its best fit from the start values and the context there. */
function bestFitOf(model: ReturnType<typeof stressModel>) {
  const problem = buildProblem(model, REFERENCE_PROBLEM);
  const scratch = createScratch(problem);
  const s = startPoint(problem.model);
  const min = minimise(problem, s.phi, s.gamma, scratch);
  const c = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!c.ok) throw new Error(c.message);
  return { problem, m: problem.model, min, c };
}

describe('the reference cold fit', () => {
  it('follows the path from its best fit where moving the parameter alone empties a bin with events, and is not left in a higher valley', () => {
    // A tail killer model: with np3 at θ̂ − σ̂ the best fit with np3 moved gives a bin with events
    // no expected events (infinite NLL), and Newton from the start values stops in a valley with
    // a tail template clipped, 5.8 above the engine's conditional minimum.
    const model = stressModel(EDGE_SIZES.tiny, 8);
    const { problem, m, min, c } = bestFitOf(model);
    const i = m.names.indexOf('np3');
    const value = min.phi[i] - Math.sqrt(c.context.V[i * m.nDense + i]);
    const engine = conditionalFit(c.context, i, value, createScratch(problem));
    const reference = coldFit(problem, i, value, createScratch(problem), { phi: min.phi, gamma: min.gamma });
    expect(engine.ok && reference.ok).toBe(true);
    expect(Math.abs(reference.nll - engine.nll)).toBeLessThan(1e-7);
    expect(Math.abs(reference.mu - engine.phi[0])).toBeLessThan(1e-4);
  });

  it("re-minimises from the engine's conditional minimum itself, and keeps it only where that leads lower than its own starts", () => {
    // Edge small seed 2, np3 at θ̂ − 1 reached from θ̂ − σ̂ (the pre-fit impact): the engine's
    // refit, continued from the post-fit one, ends in a basin that neither the reference's start
    // values, its best fit nor the path from it in steps of 0.1 enters.
    const model = stressModel(EDGE_SIZES.small, 2);
    const { problem, m, min, c } = bestFitOf(model);
    const i = m.names.indexOf('np3');
    const th = min.phi[i];
    const value = th - 1;
    const r = new Refitter([c.context]).run({ kind: 'fix', context: 0, index: i, value: th - Math.sqrt(c.context.V[i * m.nDense + i]), next: value, keepPoint: true });
    const point = r.next!.point!;
    expect(point.value).toBe(value);
    const best = { phi: min.phi, gamma: min.gamma };
    const own = coldFit(problem, i, value, createScratch(problem), best);
    const withEngine = coldFit(problem, i, value, createScratch(problem), best, { phi: Float64Array.from(point.phi), gamma: Float64Array.from(point.gamma) });
    expect(own.engineLower).toBe(false);
    expect(withEngine.engineLower).toBe(true);
    expect(withEngine.nll).toBeLessThan(own.nll - 1e-3);
    // the engine's own NLL there is no lower than the minimum the reference reaches from its point
    expect(r.next!.nll!).toBeGreaterThanOrEqual(withEngine.nll - 1e-9);
    expect(Math.abs(r.next!.nll! - withEngine.nll)).toBeLessThan(1e-7);
  });
});
