import { Matrix, inverse } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitModel } from '../../server/fit';
import { interpolate, interpolateDerivative, interpolateSecondDerivative } from '../../server/fit/interpolation';
import { countingModel, expectClose } from './helpers';

const fast = { impacts: 'none', expected: false } as const;

describe('docs/likelihood.md §8 checks', () => {
  it('check 1: one bin with known background gives μ̂ = (n − b)/s and q0 = 2(n ln(n/b) − (n − b)) (Cowan et al., EPJC 71 (2011) 1554)', async () => {
    for (const [s, b, n] of [
      [10, 50, 65],
      [5, 100, 130],
      [20, 3, 12],
    ]) {
      const r = await fitModel(countingModel({ s, b, n }), fast);
      expect(r.status).toBe('converged');
      const sigma = r.summary!.mu.error!;
      expectClose(r.summary!.mu.value, (n - b) / s, 0, 1e-4 * sigma);
      expectClose(r.summary!.discovery!.q0, 2 * (n * Math.log(n / b) - (n - b)), 1e-6);
      // σ_μ from the Hessian of a single Poisson bin: √n / s.
      expectClose(sigma, Math.sqrt(n) / s, 1e-3);
    }
  });

  it('check 2: Asimov data n = s + b give Z = sqrt(2((s + b) ln(1 + s/b) − s)) (Cowan et al. 2011, the Asimov significance of a counting experiment)', async () => {
    for (const [s, b] of [
      [10, 50],
      [3, 1],
      [50, 1000],
    ]) {
      const expected = Math.sqrt(2 * ((s + b) * Math.log(1 + s / b) - s));
      const r = await fitModel(countingModel({ s, b, n: 0 }), { dataset: 'asimov', asimovMu: 1, impacts: 'none' });
      expectClose(r.summary!.discovery!.z, expected, 0, 1e-3);
      expectClose(r.summary!.expected!.z, expected, 0, 1e-3);
    }
  });

  it('check 3: a signal region with a control region measuring the background gives Z = 1.10737 for s = 10, b = 50, τ = 2 (G. Cowan, "Discovery sensitivity for a counting experiment with background uncertainty", 2012)', async () => {
    const formula = (s: number, b: number, tau: number) => {
      const v = b / tau;
      return Math.sqrt(2 * ((s + b) * Math.log(((s + b) * (b + v)) / (b * b + (s + b) * v)) - ((b * b) / v) * Math.log(1 + (v * s) / (b * (b + v)))));
    };
    expectClose(formula(10, 50, 2), 1.10737, 0, 1e-5);
    for (const [s, b, tau] of [
      [10, 50, 2],
      [5, 10, 1],
      [30, 200, 5],
    ]) {
      const r = await fitModel(countingModel({ s, b, n: 0, tau }), { dataset: 'asimov', asimovMu: 1, impacts: 'none', expected: false });
      expect(r.status).toBe('converged');
      expectClose(r.summary!.discovery!.z, formula(s, b, tau), 0, 1e-3);
    }
  });

  it('check 4: a fitted γ equals the positive root of m γ² + (o − m + m²σ²) γ + (m σ² (o − n) − o) = 0 (Conway, arXiv:1103.0354)', async () => {
    for (const [m, o, n, v] of [
      [100, 50, 170, 400],
      [20, 0, 10, 25],
      [5, 40, 0, 4],
      [60, 10, 90, 3600],
    ]) {
      const model = exchangeModelSchema.parse({
        format: 'plumbline.model',
        version: 1,
        name: 'one bin with template statistics',
        regions: [{ key: 'SR', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [n] }],
        processes: [
          { key: 'mc', kind: 'background' },
          { key: 'dd', kind: 'background' },
        ],
        templates: [
          { region: 'SR', process: 'mc', nominal: [m], variance: [v] },
          { region: 'SR', process: 'dd', nominal: [o] },
        ],
      });
      const r = await fitModel(model, { impacts: 'none', expected: false });
      expect(r.status).toBe('converged');
      const sigma = Math.sqrt(v) / m;
      const B = o - m + m * m * sigma * sigma;
      const C = m * sigma * sigma * (o - n) - o;
      const root = Math.max(0, (-B + Math.sqrt(B * B - 4 * m * C)) / (2 * m));
      const gamma = r.gammas.list[0];
      expectClose(gamma.value, root, 0, 1e-4 * (gamma.error ?? 1));
    }
  });

  it('check 6: a large-count model with linear effects gives μ̂ and V of generalised least squares (ml-matrix, weights 1/ν iterated to the solution)', async () => {
    // ν_b = μ s_b + bkg_b + Σ_i θ_i d_ib: shape effects with ν± = ν0 ± d are linear in θ.
    const B = 6;
    const s = [2e5, 5e5, 9e5, 5e5, 2e5, 1e5];
    const bkg = [4e6, 3e6, 2.5e6, 2e6, 1.5e6, 1e6];
    const d = [
      [4e4, 3e4, 2e4, 1e4, 0, -1e4],
      [-2e4, 0, 2e4, 4e4, 6e4, 8e4],
      [1e4, 1e4, 1e4, 1e4, 1e4, 1e4],
    ];
    const shift = [2100, -1800, 3300, -900, 1200, -2500]; // data = Asimov(μ = 1) + a fluctuation of order √ν
    const n = bkg.map((v, j) => v + s[j] + shift[j]);
    const model = exchangeModelSchema.parse({
      format: 'plumbline.model',
      version: 1,
      name: 'linear',
      regions: [{ key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [...Array(B + 1).keys()], observed: n }],
      processes: [
        { key: 'sig', kind: 'signal' },
        { key: 'bkg', kind: 'background' },
      ],
      templates: [
        { region: 'SR', process: 'sig', nominal: s },
        { region: 'SR', process: 'bkg', nominal: bkg },
      ],
      systematics: d.map((di, i) => ({
        key: `t${i}`,
        effects: [{ region: 'SR', process: 'bkg', kind: 'shape', up: bkg.map((v, j) => v + di[j]), down: bkg.map((v, j) => v - di[j]) }],
      })),
    });
    const r = await fitModel(model, { impacts: 'none', expected: false });
    expect(r.status).toBe('converged');

    // GLS: minimise (n − ν)ᵀ W (n − ν) + θᵀθ with ν = ν0 + Jφ, φ = (μ − 1, θ), W = diag(1/ν) at the solution.
    const J = new Matrix(B, 4);
    for (let j = 0; j < B; j++) {
      J.set(j, 0, s[j]);
      for (let i = 0; i < 3; i++) J.set(j, i + 1, d[i][j]);
    }
    const C = Matrix.zeros(4, 4);
    for (let i = 1; i < 4; i++) C.set(i, i, 1);
    let phi = Matrix.zeros(4, 1);
    let cov = Matrix.eye(4);
    for (let it = 0; it < 20; it++) {
      const nu = J.mmul(phi);
      const W = Matrix.zeros(B, B);
      const resid = new Matrix(B, 1);
      for (let j = 0; j < B; j++) {
        const v = s[j] + bkg[j] + nu.get(j, 0);
        W.set(j, j, 1 / v);
        resid.set(j, 0, n[j] - s[j] - bkg[j]);
      }
      const A = J.transpose().mmul(W).mmul(J).add(C);
      cov = inverse(A);
      phi = cov.mmul(J.transpose().mmul(W).mmul(resid));
    }
    const byName = new Map(r.parameters.map((p) => [p.name, p]));
    const names = ['mu', 't0', 't1', 't2'];
    names.forEach((name, i) => {
      const p = byName.get(name)!;
      const expected = phi.get(i, 0) + (i === 0 ? 1 : 0);
      expectClose(p.value, expected, 0, 1e-4 * p.error!);
      expectClose(p.error, Math.sqrt(cov.get(i, i)), 1e-3);
    });
  });

  it('check 7: the interpolation is exact at 0 and ±1 and continuous with two derivatives at ±1 (finite differences)', () => {
    const [a, b] = [0.7, -0.3];
    expect(interpolate(0, a, b)).toBe(0);
    expectClose(interpolate(1, a, b), a, 1e-15);
    expectClose(interpolate(-1, a, b), b, 1e-15);
    for (const x of [-1, 1]) {
      const h = 1e-7;
      for (const f of [interpolate, interpolateDerivative, interpolateSecondDerivative]) {
        expectClose(f(x - h, a, b), f(x + h, a, b), 0, 1e-5);
      }
      // The analytic derivatives match central differences on both sides of the seam.
      for (const y of [x - 1e-3, x + 1e-3]) {
        const e = 1e-5;
        expectClose(interpolateDerivative(y, a, b), (interpolate(y + e, a, b) - interpolate(y - e, a, b)) / (2 * e), 0, 1e-7);
        expectClose(interpolateSecondDerivative(y, a, b), (interpolateDerivative(y + e, a, b) - interpolateDerivative(y - e, a, b)) / (2 * e), 0, 1e-6);
      }
    }
    // Linear beyond ±1.
    expectClose(interpolate(2, a, b), 2 * a, 1e-15);
    expectClose(interpolate(-3, a, b), 3 * b, 1e-15);
  });
});
