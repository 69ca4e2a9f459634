/**
 * Smoothers for the relative shift of a variation, r_b = (ν±_b − ν⁰_b) / ν⁰_b, across the bins of
 * one region. Each is a published method; neither is applied unless a person asks, and the
 * original is kept beside the smoothed one (services/smoothing).
 */

export type SmoothingMethod = { method: 'median-hanning' } | { method: 'local-regression'; span: number; iterations: number };

const median3 = (a: number, b: number, c: number) => Math.max(Math.min(a, b), Math.min(Math.max(a, b), c));

/**
 * Running medians of 3, repeated until nothing changes ("3R"), with Tukey's rule for the end
 * points, then Hanning (¼, ½, ¼) (J. W. Tukey, Exploratory Data Analysis, Addison-Wesley 1977,
 * chapter 7). The end-point rule replaces y₁ by the median of y₁, y₂ and the straight-line
 * extrapolation 3y₂ − 2y₃ (and likewise at the other end); Hanning leaves the end points as
 * they are. Fewer than three values are returned unchanged.
 */
export function medianHanning(values: readonly number[]): number[] {
  const n = values.length;
  if (n < 3) return [...values];
  let y = [...values];
  for (let pass = 0; pass < 100; pass++) {
    const next = y.map((v, i) => (i === 0 || i === n - 1 ? v : median3(y[i - 1], v, y[i + 1])));
    const changed = next.some((v, i) => v !== y[i]);
    y = next;
    if (!changed) break;
  }
  y[0] = median3(y[0], y[1], 3 * y[1] - 2 * y[2]);
  y[n - 1] = median3(y[n - 1], y[n - 2], 3 * y[n - 2] - 2 * y[n - 3]);
  return y.map((v, i) => (i === 0 || i === n - 1 ? v : 0.25 * y[i - 1] + 0.5 * v + 0.25 * y[i + 1]));
}

const tricube = (u: number) => (u < 1 ? (1 - u ** 3) ** 3 : 0);
const bisquare = (u: number) => (u < 1 ? (1 - u ** 2) ** 2 : 0);

/**
 * Locally weighted linear regression with robustness iterations (W. S. Cleveland, "Robust locally
 * weighted regression and smoothing scatterplots", J. Am. Stat. Assoc. 74 (1979) 829): at each x_i
 * a straight line is fitted to the q = ⌈span·n⌉ nearest points with tricube weights in the
 * distance scaled by the q-th nearest; each robustness iteration multiplies the weights by the
 * bisquare of the residuals over six times their median absolute value.
 */
export function localRegression(x: readonly number[], y: readonly number[], span: number, iterations: number): number[] {
  const n = x.length;
  if (n < 3) return [...y];
  const q = Math.min(n, Math.max(2, Math.ceil(span * n)));
  let robustness = new Array<number>(n).fill(1);
  let fitted = new Array<number>(n).fill(0);
  for (let pass = 0; pass <= iterations; pass++) {
    fitted = x.map((xi) => {
      const distances = x.map((xj) => Math.abs(xj - xi));
      const h = [...distances].sort((a, b) => a - b)[q - 1];
      let sw = 0;
      let sx = 0;
      let sy = 0;
      let sxx = 0;
      let sxy = 0;
      for (let j = 0; j < n; j++) {
        const w = (h > 0 ? tricube(distances[j] / h) : distances[j] === 0 ? 1 : 0) * robustness[j];
        sw += w;
        sx += w * x[j];
        sy += w * y[j];
        sxx += w * x[j] * x[j];
        sxy += w * x[j] * y[j];
      }
      if (sw === 0) return y[x.indexOf(xi)];
      const mx = sx / sw;
      const my = sy / sw;
      const varx = sxx / sw - mx * mx;
      const slope = varx > 1e-12 * (1 + mx * mx) ? (sxy / sw - mx * my) / varx : 0;
      return my + slope * (xi - mx);
    });
    if (pass === iterations) break;
    const residuals = y.map((v, i) => Math.abs(v - fitted[i]));
    const sorted = [...residuals].sort((a, b) => a - b);
    const cmad = 6 * (n % 2 ? sorted[(n - 1) / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]));
    // residuals already negligible: nothing to make robust against (as the published program does)
    if (cmad < 1e-7 * (residuals.reduce((a, r) => a + r, 0) / n)) break;
    robustness = residuals.map((r) => (r <= 0.001 * cmad ? 1 : r > 0.999 * cmad ? 0 : bisquare(r / cmad)));
  }
  return fitted;
}

/**
 * Smooths a varied template through its relative shift: r = (varied − nominal)/nominal in bins
 * with a non-zero nominal (bins at bin centres for the local regression), smoothed, and turned
 * back into yields, clipped at zero. Bins with a zero nominal keep their value.
 */
export function smoothVariation(nominal: readonly number[], varied: readonly number[], centres: readonly number[], how: SmoothingMethod): number[] {
  const filled = nominal.map((_, b) => b).filter((b) => nominal[b] > 0);
  const r = filled.map((b) => (varied[b] - nominal[b]) / nominal[b]);
  const s = how.method === 'median-hanning' ? medianHanning(r) : localRegression(filled.map((b) => centres[b]), r, how.span, how.iterations);
  const out = [...varied];
  filled.forEach((b, i) => (out[b] = Math.max(0, nominal[b] * (1 + s[i]))));
  return out;
}
