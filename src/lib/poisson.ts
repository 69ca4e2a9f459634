import { gammaP } from '@shared/stats/distributions';

/**
 * Error bars for observed counts. We draw the Garwood interval: the exact central confidence
 * interval of a Poisson mean given n observed events, at 68.27 % (±1σ of a normal) coverage.
 * For n ≥ 1 its ends are
 *   lower = P⁻¹(n, α/2),   upper = P⁻¹(n + 1, 1 − α/2),   α = 1 − 0.6827,
 * where P(a, x) is the regularised lower incomplete gamma function (equivalently ½·χ²-quantiles
 * with 2n and 2n + 2 degrees of freedom; F. Garwood, Biometrika 28 (1936) 437). For n = 0 the
 * lower end is 0. Unlike ±√n it never reaches below zero and is not zero-width at n = 0.
 */

/** P(a, x), the regularised lower incomplete gamma function (shared/stats, as the server uses it). */
export const regularisedGammaP = gammaP;

export const ONE_SIGMA_COVERAGE = 0.682689492137;

/** The x with P(a, x) = p, by bisection on a bracket that always contains it (monotone in x). */
export function inverseGammaP(a: number, p: number): number {
  let lo = 0;
  let hi = Math.max(1, a + 10 * Math.sqrt(a) + 10);
  while (regularisedGammaP(a, hi) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * Math.max(1, hi); i++) {
    const mid = 0.5 * (lo + hi);
    if (regularisedGammaP(a, mid) < p) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** The Garwood interval [lower, upper] for the mean of a Poisson count n (non-integer n is rounded). */
export function garwoodInterval(n: number, coverage = ONE_SIGMA_COVERAGE): [number, number] {
  const k = Math.max(0, Math.round(n));
  const alpha = 1 - coverage;
  const lower = k === 0 ? 0 : inverseGammaP(k, alpha / 2);
  const upper = inverseGammaP(k + 1, 1 - alpha / 2);
  return [lower, upper];
}
