/**
 * Normal and χ² distributions, written here so the engine needs no statistics package at
 * run time (and the client shows the same values the engine computes). Both rest on the regularised incomplete gamma function:
 *   erfc(x) = Q(1/2, x²),   χ²_k CDF(x) = P(k/2, x/2)
 * evaluated by its power series for x < a + 1 and by a continued fraction (modified Lentz)
 * otherwise (Press et al., Numerical Recipes, 3rd ed., §6.2). ln Γ by the Lanczos
 * approximation with g = 7, n = 9 (coefficients from memory; checked against jstat in tests).
 */

const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

export function logGamma(x: number): number {
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x); // reflection
  const z = x - 1;
  let sum = LANCZOS[0];
  for (let i = 1; i < 9; i++) sum += LANCZOS[i] / (z + i);
  const t = z + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(sum);
}

const EPS = 1e-16;
const TINY = 1e-300;

function lowerSeries(a: number, x: number): number {
  let term = 1 / a;
  let sum = term;
  for (let n = 1; n < 10_000; n++) {
    term *= x / (a + n);
    sum += term;
    if (Math.abs(term) < Math.abs(sum) * EPS) break;
  }
  return sum * Math.exp(-x + a * Math.log(x) - logGamma(a));
}

function upperFraction(a: number, x: number): number {
  let b = x + 1 - a;
  let c = 1 / TINY;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 10_000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < TINY) d = TINY;
    c = b + an / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < EPS) break;
  }
  return Math.exp(-x + a * Math.log(x) - logGamma(a)) * h;
}

/** Regularised lower incomplete gamma P(a, x). */
export function gammaP(a: number, x: number): number {
  if (x <= 0) return 0;
  if (x === Infinity) return 1;
  return x < a + 1 ? lowerSeries(a, x) : 1 - upperFraction(a, x);
}

/** Regularised upper incomplete gamma Q(a, x) = 1 − P(a, x), accurate in the far tail. */
export function gammaQ(a: number, x: number): number {
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return x < a + 1 ? 1 - lowerSeries(a, x) : upperFraction(a, x);
}

/** Φ(z), the standard normal CDF. */
export function normalCdf(z: number): number {
  if (z === Infinity) return 1;
  if (z === -Infinity) return 0;
  const half = 0.5 * gammaQ(0.5, (z * z) / 2); // = erfc(|z|/√2)/2 = Φ(−|z|)
  return z < 0 ? half : 1 - half;
}

/** 1 − Φ(z), accurate far into the upper tail (the one-sided p-value of Z). */
export function normalSurvival(z: number): number {
  return normalCdf(-z);
}

// Rational approximation of Φ⁻¹ (P. J. Acklam, 2003; coefficients from memory), polished
// below by Halley steps on our own Φ so the result is accurate to double precision.
const A = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const B = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const C = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const D = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];

function acklam(p: number): number {
  const low = 0.02425;
  if (p < low) {
    const q = Math.sqrt(-2 * Math.log(p));
    return (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5]) / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1);
  }
  if (p > 1 - low) return -acklam(1 - p);
  const q = p - 0.5;
  const r = q * q;
  return ((((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q) / (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1);
}

/** Φ⁻¹(p) for 0 < p < 1 (±Infinity at 0 and 1). */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError(`normalQuantile needs 0 ≤ p ≤ 1, got ${p}`);
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  let x = acklam(p);
  for (let i = 0; i < 2; i++) {
    // Work on the smaller tail so the residual keeps its relative precision.
    // e = Φ(x) − p, written as (1 − p) − (1 − Φ(x)) in the upper half.
    const e = p < 0.5 ? normalCdf(x) - p : 1 - p - normalSurvival(x);
    const u = e * Math.sqrt(2 * Math.PI) * Math.exp((x * x) / 2);
    x = x - u / (1 + (x * u) / 2);
  }
  return x;
}

/** χ² CDF with k degrees of freedom. */
export function chiSquareCdf(x: number, k: number): number {
  return gammaP(k / 2, x / 2);
}

/** χ² survival 1 − CDF: the goodness-of-fit p-value. */
export function chiSquareSurvival(x: number, k: number): number {
  return gammaQ(k / 2, x / 2);
}

/** χ² quantile: exact via Φ⁻¹ for one degree of freedom, otherwise bisection on the CDF. */
export function chiSquareQuantile(p: number, k: number): number {
  if (!(p >= 0 && p < 1)) throw new RangeError(`chiSquareQuantile needs 0 ≤ p < 1, got ${p}`);
  if (k === 1) {
    const z = normalQuantile((1 + p) / 2);
    return z * z;
  }
  let lo = 0;
  let hi = Math.max(1, k);
  while (chiSquareCdf(hi, k) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-14 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (chiSquareCdf(mid, k) < p) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** The standard normal density φ(z). */
export function normalPdf(z: number): number {
  return Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);
}
