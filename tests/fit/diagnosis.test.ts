import { describe, expect, it } from 'vitest';
import { fitOptionsSchema } from '@shared/schemas/fit';
import { fitModel, syntheticModel } from '../../server/fit';
import { curvatureAt } from '../../server/fit/covariance';
import { diagnoseParameter } from '../../server/fit/diagnosis';
import { createScratch, minimise } from '../../server/fit/minimiser';
import { buildProblem, startPoint } from '../../server/fit/problem';
import { createWorkspace, evaluateYields } from '../../server/fit/yields';

/**
 * The diagnosis panel's numbers (docs/likelihood.md §6). The Fisher information of a Poisson bin is
 * (∂ν/∂θ)²/ν (common practice, no source; e.g. any statistics text's Poisson Fisher information
 * 1/λ times the chain rule). Here the engine's analytic derivative is checked against central
 * finite differences of the expected counts themselves.
 */
describe('the diagnosis of one parameter', () => {
  const model = syntheticModel('small');
  const options = fitOptionsSchema.parse({ impacts: 'none', expected: false });

  it('has an information breakdown that sums to its total, and per-bin information equal to finite differences of ν', () => {
    const fit = { problem: buildProblem(model, options) };
    const m = fit.problem.model;
    const scratch = createScratch(fit.problem);
    const s0 = startPoint(m);
    const min = minimise(fit.problem, s0.phi, s0.gamma, scratch);
    const curvature = curvatureAt(fit.problem, min.phi, min.gamma, scratch);
    if (!curvature.ok) throw new Error(curvature.message);
    const ws = createWorkspace(m);
    const counts = (name: string, shift: number) => {
      const phi = Float64Array.from(curvature.context.phi);
      phi[m.names.indexOf(name)] += shift;
      evaluateYields(m, phi, curvature.context.gamma, ws);
      return Float64Array.from(ws.nu);
    };
    const names = m.names.slice(m.thetaStart, m.thetaStart + 6);
    let checkedBins = 0;
    for (const name of names) {
      const d = diagnoseParameter(model, options, name, 7);
      expect(d.failure).toBeNull();
      // the breakdown adds up: regions plus the constraint's 1 is the total, and the width is 1/sqrt(total)
      const sum = d.regions.reduce((s, r) => s + r.information, 0) + d.information.constraint;
      expect(sum).toBeCloseTo(d.information.total, 10);
      expect(d.information.width).toBeCloseTo(1 / Math.sqrt(d.information.total), 12);
      // each region's information is the sum of its bins (bins below the reporting share count as 0)
      for (const r of d.regions) expect(r.bins.reduce((s, b) => s + b.information, 0)).toBeCloseTo(r.information, 3);
      const h = 1e-5;
      const [plus, minus, best] = [counts(name, h), counts(name, -h), counts(name, 0)];
      for (const r of d.regions) {
        const region = m.regions.find((x) => x.key === r.region)!;
        for (const b of r.bins) {
          if (b.information === 0) continue;
          const i = region.firstBin + b.bin;
          const derivative = (plus[i] - minus[i]) / (2 * h);
          expect(b.expected).toBeCloseTo(best[i], 9);
          expect(b.information / ((derivative * derivative) / best[i])).toBeCloseTo(1, 5);
          checkedBins++;
        }
      }
    }
    expect(checkedBins).toBeGreaterThan(20);
  });

  it('agrees with the fit: the same best value and σ, and a scan whose q = 1 crossings bracket it', async () => {
    const result = await fitModel(model, options);
    const name = result.nuisance.find((n) => !n.fixed)!.name;
    const d = diagnoseParameter(model, options, name, 11);
    const p = result.parameters.find((x) => x.name === name)!;
    expect(d.value).toBeCloseTo(p.value, 10);
    expect(d.error!).toBeCloseTo(p.error!, 10);
    const stored = result.information.find((x) => x.parameter === name)!;
    expect(d.information.total).toBeCloseTo(stored.total, 10);
    expect(d.scan.crossings68.low!).toBeLessThan(d.value);
    expect(d.scan.crossings68.high!).toBeGreaterThan(d.value);
    // the ±1 variation is the template's own: at θ = ±1 against θ = 0
    const bin = d.regions.flatMap((r) => r.bins).find((b) => b.information > 0)!;
    expect(Math.abs(bin.up) + Math.abs(bin.down)).toBeGreaterThan(0);
  });

  it('refuses a name that is not a nuisance parameter', () => {
    expect(() => diagnoseParameter(model, options, 'mu')).toThrow(/not a nuisance parameter/);
    expect(() => diagnoseParameter(model, options, 'no_such_thing')).toThrow(/not a nuisance parameter/);
  });
});
