import { chiSquareSurvival } from '@shared/stats/distributions';

/**
 * The statistical precision of a shape variation: the shift Δ_b = ν±_b − ν⁰_b of each bin has
 * an error from the limited simulation behind it, and a shift that is no larger than its noise
 * is the commonest cause of a spurious constraint.
 *
 * - With the variance of the shift given (for the same events reweighted,
 *   Var Δ_b = Σ (w_varied − w_nominal)²), that is the error.
 * - Without it, the error is estimated conservatively from the template's variance v_b (sum of
 *   squared weights): as if the varied template were an independent sample of the same size,
 *   Var Δ_b ≈ 2 v_b (common practice, no source). Without a template variance either, no error
 *   can be given.
 *
 * Two χ² tests per shift (Pearson's χ² of independent Gaussian bins; the p-value is the χ²
 * survival function):
 *   against zero:  χ² = Σ Δ_b² / σ_b²,                            B degrees of freedom
 *   against flat:  χ² = Σ (Δ_b − c ν⁰_b)² / σ_b²,  c the weighted least-squares relative shift
 *                  c = Σ(Δ_b ν⁰_b/σ_b²) / Σ(ν⁰_b²/σ_b²),          B − 1 degrees of freedom
 * A shape whose χ² against flat is not significant (p above the threshold) is indistinguishable
 * from a scale effect with its noise: a candidate for smoothing or for a scale effect.
 */
export type ShiftPrecision = {
  /** σ of Δ per bin (null where no error can be given) */
  errors: (number | null)[];
  /** where the errors come from */
  source: 'given' | 'estimated' | 'none';
  againstZero: ChiSquare | null;
  againstFlat: (ChiSquare & { relativeShift: number }) | null;
};
export type ChiSquare = { chi2: number; dof: number; p: number };

/** p-value below which a shape counts as significant over its noise (common practice, no source). */
export const SIGNIFICANT_P = 0.05;

export function shiftPrecision(nominal: number[], varied: number[], shiftVariance: number[] | null, templateVariance: number[] | null): ShiftPrecision {
  const source: ShiftPrecision['source'] = shiftVariance ? 'given' : templateVariance ? 'estimated' : 'none';
  const variance = shiftVariance ?? templateVariance?.map((v) => 2 * v) ?? null;
  const errors = nominal.map((_, b) => (variance && variance[b] > 0 ? Math.sqrt(variance[b]) : null));
  // bins with an error enter the tests; a bin whose shift and error are both zero carries nothing
  const bins = nominal.map((_, b) => b).filter((b) => errors[b] !== null);
  if (bins.length === 0) return { errors, source, againstZero: null, againstFlat: null };
  const w = (b: number) => 1 / errors[b]! ** 2;
  const shift = (b: number) => varied[b] - nominal[b];
  let zero = 0;
  for (const b of bins) zero += shift(b) ** 2 * w(b);
  const againstZero = { chi2: zero, dof: bins.length, p: chiSquareSurvival(zero, bins.length) };
  let sxy = 0;
  let sxx = 0;
  for (const b of bins) {
    sxy += shift(b) * nominal[b] * w(b);
    sxx += nominal[b] ** 2 * w(b);
  }
  if (bins.length < 2 || sxx === 0) return { errors, source, againstZero, againstFlat: null };
  const c = sxy / sxx;
  let flat = 0;
  for (const b of bins) flat += (shift(b) - c * nominal[b]) ** 2 * w(b);
  const dof = bins.length - 1;
  return { errors, source, againstZero, againstFlat: { chi2: flat, dof, p: chiSquareSurvival(flat, dof), relativeShift: c } };
}
