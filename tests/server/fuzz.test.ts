import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fitThroughApi } from '../fuzz/fit-through-api';
import { fuzzFixture, fuzzTarget, TARGETS, type Fixture } from '../fuzz/targets';

/**
 * The deterministic slice of `npm run fuzz`: the same targets and generators, a fixed seed and a
 * few dozen inputs each. Every input must get a 4xx with a message and leave the database as it was.
 */
const SEED = 20261202;
const RUNS = 40;

describe('malformed input is refused with a message and changes nothing', () => {
  let f: Fixture;
  beforeAll(async () => {
    f = await fuzzFixture();
  });
  afterAll(async () => f.t.close());

  for (const target of TARGETS) {
    it(target.name, async () => {
      const tally = await fuzzTarget(f, target, RUNS, SEED);
      expect(tally.inputs).toBe(RUNS);
    });
  }

  it('numerically hostile models that import cleanly fit or fail with a reason, and every fit response matches its schema', async () => {
    const { imported, states } = await fitThroughApi(f, 6, SEED);
    expect(imported).toBeGreaterThan(2);
    expect((states.succeeded ?? 0) + (states.failed ?? 0)).toBe(imported);
  }, 120_000);
});
