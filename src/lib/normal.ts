/**
 * The standard normal distribution on the client: density, tails, quantile, and the one-sided
 * conversions between a p-value and a significance Z = Φ⁻¹(1 − p).
 *
 * The tail is erfc through the regularised upper incomplete gamma function,
 *   1 − Φ(z) = ½ erfc(z/√2) = ½ Q(½, z²/2)   (z ≥ 0),
 * by its power series below x = a + 1 and by a continued fraction (modified Lentz) above
 * (Press et al., Numerical Recipes, 3rd ed., §6.2), so it keeps its relative precision far into
 * the tail where 1 − Φ would round to 0.
 */

const LN_SQRT_PI = 0.5 * Math.log(Math.PI); // ln Γ(½)
const EPS = 1e-16;
const TINY = 1e-300;

/** Q(½, x), the regularised upper incomplete gamma function at a = ½. */
function gammaQHalf(x: number): number {
  if (x <= 0) return 1;
  const a = 0.5;
  const prefactor = Math.exp(-x + a * Math.log(x) - LN_SQRT_PI);
  if (x < a + 1) {
    let term = 1 / a;
    let sum = term;
    for (let n = 1; n < 10_000; n++) {
      term *= x / (a + n);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * EPS) break;
    }
    return 1 - sum * prefactor;
  }
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
  return prefactor * h;
}

/** φ(z) = exp(−z²/2)/√(2π). */
export function normalPdf(z: number): number {
  return Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);
}

/** 1 − Φ(z), accurate in the upper tail. */
export function normalSurvival(z: number): number {
  if (z === Infinity) return 0;
  if (z === -Infinity) return 1;
  const tail = 0.5 * gammaQHalf((z * z) / 2); // = Φ(−|z|)
  return z >= 0 ? tail : 1 - tail;
}

/** Φ(z). */
export function normalCdf(z: number): number {
  return normalSurvival(-z);
}

// Rational approximation of Φ⁻¹ (P. J. Acklam, 2003), refined below by Halley steps on Φ.
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

/** Φ⁻¹(p) for 0 ≤ p ≤ 1 (−∞ at 0, +∞ at 1); NaN outside. */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  let x = acklam(p);
  for (let i = 0; i < 2; i++) {
    // Residual on the smaller tail, so it keeps its relative precision.
    const e = p < 0.5 ? normalCdf(x) - p : 1 - p - normalSurvival(x);
    const u = e * Math.sqrt(2 * Math.PI) * Math.exp((x * x) / 2);
    x -= u / (1 + (x * u) / 2);
  }
  return x;
}

/**
 * The one-sided significance of a p-value: Z = Φ⁻¹(1 − p), written as −Φ⁻¹(p) so a tiny p keeps
 * its precision. p = 0 gives +∞; null, NaN or p outside [0, 1] give null.
 */
export function zFromP(p: number | null | undefined): number | null {
  if (p === null || p === undefined || !(p >= 0 && p <= 1)) return null;
  return -normalQuantile(p);
}

/** The one-sided p-value of a significance: p = 1 − Φ(Z). */
export function pFromZ(z: number): number {
  return normalSurvival(z);
}
