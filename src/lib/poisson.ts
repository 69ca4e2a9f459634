/**
 * Error bars for observed counts. We draw the Garwood interval: the exact central confidence
 * interval of a Poisson mean given n observed events, at 68.27 % (±1σ of a normal) coverage.
 * For n ≥ 1 its ends are
 *   lower = P⁻¹(n, α/2),   upper = P⁻¹(n + 1, 1 − α/2),   α = 1 − 0.6827,
 * where P(a, x) is the regularised lower incomplete gamma function (equivalently ½·χ²-quantiles
 * with 2n and 2n + 2 degrees of freedom; F. Garwood, Biometrika 28 (1936) 437). For n = 0 the
 * lower end is 0. Unlike ±√n it never reaches below zero and is not zero-width at n = 0.
 */

export const ONE_SIGMA_COVERAGE = 0.682689492137;

function logGamma(x: number): number {
  // Lanczos approximation (g = 7, n = 9), accurate to ~1e-15 for x > 0.
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905,
    -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  x -= 1;
  let a = c[0];
  const t = x + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (x + i);
  return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Regularised lower incomplete gamma P(a, x): series below a + 1, continued fraction above (Numerical Recipes §6.2). */
export function regularisedGammaP(a: number, x: number): number {
  if (x <= 0) return 0;
  const lnPrefactor = -x + a * Math.log(x) - logGamma(a);
  if (x < a + 1) {
    let term = 1 / a;
    let sum = term;
    for (let k = 1; k < 1000; k++) {
      term *= x / (a + k);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-15) break;
    }
    return sum * Math.exp(lnPrefactor);
  }
  // Lentz's method for the continued fraction of Q(a, x).
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 1000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-15) break;
  }
  return 1 - Math.exp(lnPrefactor) * h;
}

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
