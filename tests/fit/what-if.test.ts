import { describe, expect, it } from 'vitest';
import { fitModel, whatIf } from '../../server/fit';
import { countingModel } from './helpers';

/**
 * What a change of the model does to a stored fit (server/fit/what-if.ts): the numbers come with
 * the refit's warnings, as every fit's do.
 */
describe('what a change of the model does', () => {
  // a control region with ten times the signal region's background and no floating normalisation;
  // a background systematic of ±1 % there only: a control count twice the expectation pulls it
  // past the edge of its range (±5)
  const base = { s: 10, b: 100, n: 112, tau: 10, m: 1000 };
  const withSystematic = (cr: number) =>
    countingModel(
      { ...base, m: cr },
      { floatingNorms: [], systematics: [{ key: 'cr_eff', effects: [{ region: 'CR', process: 'bkg', kind: 'scale', up: 1.01, down: 0.99 }] }] },
    );

  it('reports a parameter the refit leaves at a bound of its range beside its numbers', async () => {
    const reference = await fitModel(withSystematic(1000), { impacts: 'none' });
    expect(reference.status).toBe('converged');
    const outcome = whatIf({ model: withSystematic(2000), options: { impacts: 'none' }, reference, focus: ['cr_eff'] });
    expect(outcome.failure).toBeNull();
    expect(outcome.parameters.find((p) => p.name === 'cr_eff')!.pull.after).toBeCloseTo(5, 6);
    expect(outcome.warnings).toContain('At a bound of its range in the refit: cr_eff.');
  });

  it('has no warning where the refit is regular, and the same μ̂ for the same model', async () => {
    const model = withSystematic(1000);
    const reference = await fitModel(model, { impacts: 'none' });
    const outcome = whatIf({ model, options: { impacts: 'none' }, reference, focus: ['cr_eff'] });
    expect(outcome.warnings).toEqual([]);
    expect(outcome.mu.after).toBeCloseTo(reference.parameters.find((p) => p.name === 'mu')!.value, 6);
  });
});
