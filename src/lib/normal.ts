import { normalQuantile, normalSurvival } from '@shared/stats/distributions';

/**
 * The standard normal distribution on the client: the engine's own functions
 * (shared/stats/distributions.ts), and the one-sided conversions between a p-value and a
 * significance Z = Φ⁻¹(1 − p).
 */
export { normalCdf, normalPdf, normalQuantile, normalSurvival } from '@shared/stats/distributions';

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
