import { describe, expect, it } from 'vitest';
import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import { shiftPrecision } from '../../server/variations/precision';
import { localRegression, medianHanning, smoothVariation } from '../../server/variations/smoothing';
import { envelope, principalComponents, replicaSpread } from '../../server/variations/replicas';

const close = (a: number[], b: number[], tol = 1e-12) => a.forEach((v, i) => expect(v).toBeCloseTo(b[i], -Math.log10(tol)));

describe('the statistical precision of a shift', () => {
  it('tests a shift against zero and against a flat shape with the given variances (hand-computed)', () => {
    // Δ = (+10, −10), σ = 5 each: χ²₀ = 4 + 4 = 8 with 2 dof, p = exp(−8/2) (the χ² survival for 2 dof in closed form)
    const r = shiftPrecision([100, 100], [110, 90], [25, 25], null);
    expect(r.source).toBe('given');
    expect(r.errors).toEqual([5, 5]);
    expect(r.againstZero!.chi2).toBeCloseTo(8, 12);
    expect(r.againstZero!.p).toBeCloseTo(Math.exp(-4), 12);
    // the best flat relative shift is 0 (the two bins pull opposite ways), so χ²_flat = 8 with 1 dof,
    // p = erfc(√(8/2)) = erfc(2) = 0.004677734981047266 (from memory; the χ² survival for 1 dof)
    expect(r.againstFlat!.relativeShift).toBeCloseTo(0, 12);
    expect(r.againstFlat!.dof).toBe(1);
    expect(r.againstFlat!.p).toBeCloseTo(0.004677734981047266, 9);
  });

  it('finds a pure scale shift flat, with its relative size', () => {
    // +5 % in every bin: the flat fit takes it all, χ²_flat = 0
    const r = shiftPrecision([100, 200, 400], [105, 210, 420], [4, 9, 16], null);
    expect(r.againstFlat!.relativeShift).toBeCloseTo(0.05, 12);
    expect(r.againstFlat!.chi2).toBeCloseTo(0, 12);
    expect(r.againstFlat!.p).toBeCloseTo(1, 12);
  });

  it('estimates the error from the template variance when the shift variance is missing, and says so', () => {
    const r = shiftPrecision([100, 100], [110, 90], null, [8, 8]);
    expect(r.source).toBe('estimated');
    expect(r.errors).toEqual([4, 4]);
    expect(shiftPrecision([100, 100], [110, 90], null, null)).toMatchObject({ source: 'none', againstZero: null, againstFlat: null });
  });
});

describe('smoothing (hand-computed examples)', () => {
  it('takes running medians of three until they settle, applies the end-point rule, then Hanning', () => {
    // 3R: [1,5,2,8,3] → [1,2,5,3,3] → [1,2,3,3,3]; ends: median(1, 2, 3·2 − 2·3 = 0) = 1 and median(3, 3, 3) = 3;
    // Hanning: ¼·1 + ½·2 + ¼·3 = 2, ¼·2 + ½·3 + ¼·3 = 2.75, ¼·3 + ½·3 + ¼·3 = 3
    expect(medianHanning([1, 5, 2, 8, 3])).toEqual([1, 2, 2.75, 3, 3]);
    // an outlying first bin: 3R gives [10,3,3,4,5]; the end rule takes median(10, 3, 3·3 − 2·3 = 3) = 3 and
    // median(5, 4, 3·4 − 2·3 = 6) = 5; Hanning: 3, 3.25, 4
    expect(medianHanning([10, 2, 3, 4, 5])).toEqual([3, 3, 3.25, 4, 5]);
    expect(medianHanning([4, 7])).toEqual([4, 7]);
  });

  it('reproduces a straight line exactly, and with robustness iterations ignores an outlier', () => {
    const x = Array.from({ length: 10 }, (_, i) => i);
    close(localRegression(x, x.map((v) => 2 * v + 1), 0.5, 0), x.map((v) => 2 * v + 1), 1e-9);
    // y = x with ±0.1 of noise, and an outlier at x = 5
    const y = x.map((v) => (v === 5 ? 100 : v + (v % 2 ? 0.1 : -0.1)));
    // without robustness the outlier drags its neighbourhood up
    // (a span of 0.8: eight nearest points, the farthest of which gets weight 0 by the tricube)
    expect(localRegression(x, y, 0.8, 0)[5]).toBeGreaterThan(10);
    // with it, the outlier's residual exceeds six median absolute residuals, its weight becomes 0, and
    // the line through the others passes within their noise of y = x
    const robust = localRegression(x, y, 0.8, 2);
    robust.forEach((v, i) => expect(Math.abs(v - i)).toBeLessThan(0.2));
  });

  it('smooths the relative shift and gives back yields, leaving empty bins alone', () => {
    const nominal = [100, 0, 100, 100, 100];
    const varied = [110, 3, 130, 110, 110];
    // relative shifts of the filled bins: 0.1, 0.3, 0.1, 0.1 → 3R gives 0.1 everywhere; Hanning keeps it
    expect(smoothVariation(nominal, varied, [0, 1, 2, 3, 4], { method: 'median-hanning' }).map((v) => Math.round(v * 1e9) / 1e9)).toEqual([110, 3, 110, 110, 110]);
  });
});

describe('envelopes and replica sets', () => {
  it('takes the per-bin envelope of the alternatives and the nominal (hand-computed)', () => {
    expect(envelope([10, 20, 30], [[12, 19, 31], [9, 22, 29]])).toEqual({ up: [12, 22, 31], down: [9, 19, 29] });
  });

  it('takes nominal ± the per-bin standard deviation of the replicas (hand-computed)', () => {
    // bin 1: 9, 11 → mean 10, sd √((1 + 1)/1) = √2; bin 2: 20, 20 → 0
    const r = replicaSpread([10, 20], [[9, 20], [11, 20]]);
    close(r.up, [10 + Math.SQRT2, 20]);
    close(r.down, [10 - Math.SQRT2, 20]);
  });

  it('finds the principal components of the replicas that ml-matrix\u2019s SVD finds, and keeps the asked fraction of the variance', () => {
    let seed = 7;
    const random = () => ((seed = (seed * 16807) % 2147483647) / 2147483647) - 0.5;
    const nominal = [50, 40, 30, 20, 10, 5];
    // replicas with two strong directions and a little noise
    const replicas = Array.from({ length: 40 }, () => {
      const a = 3 * random();
      const b = 1 * random();
      return nominal.map((n, i) => n + a * (i + 1) + b * (i % 2 ? 1 : -1) + 0.05 * random());
    });
    const all = principalComponents(nominal, replicas, 1);
    // the reference: the right singular vectors of the centred replicas over √(N − 1); σ² are the eigenvalues
    const N = replicas.length;
    const mean = nominal.map((_, b) => replicas.reduce((s, t) => s + t[b], 0) / N);
    const svd = new SingularValueDecomposition(new Matrix(replicas.map((t) => t.map((v, b) => (v - mean[b]) / Math.sqrt(N - 1)))));
    const sigma2 = svd.diagonal.map((s) => s * s).filter((v) => v > 1e-20);
    expect(all.components.length).toBe(sigma2.length);
    all.components.forEach((c, j) => {
      expect(c.eigenvalue).toBeCloseTo(sigma2[j], 8);
      const v = svd.rightSingularVectors.getColumn(j);
      const sign = Math.sign(v.reduce((a, x) => (Math.abs(x) > Math.abs(a) ? x : a), 0));
      close(c.vector, v.map((x) => sign * x), 1e-8);
    });
    const total = sigma2.reduce((s, v) => s + v, 0);
    expect(all.total).toBeCloseTo(total, 8);
    // the cut: components are kept until they hold the asked fraction of the variance
    const first = all.components[0].fraction;
    expect(principalComponents(nominal, replicas, first - 0.001).components).toHaveLength(1);
    expect(principalComponents(nominal, replicas, first + 0.001).components).toHaveLength(2);
    expect(all.components.reduce((s, c) => s + c.fraction, 0)).toBeCloseTo(1, 10);
  });
});
