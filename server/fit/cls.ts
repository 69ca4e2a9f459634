import { normalCdf, normalQuantile } from './distributions';

/**
 * Asymptotic CLs (Read, J. Phys. G 28 (2002) 2693) with the test statistic q̃_μ and its
 * asymptotic distribution (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554,
 * arXiv:1007.1727, eqs. (65)–(66)), σ from the background-only Asimov dataset through
 * q_μ,A = μ²/σ²:
 *   q̃ ≤ q_A:  CLs+b = 1 − Φ(√q̃),                  CLb = Φ(√q_A − √q̃)
 *   q̃ > q_A:  CLs+b = 1 − Φ((q̃ + q_A)/(2√q_A)),   CLb = Φ((q_A − q̃)/(2√q_A))
 *   CLs = CLs+b / CLb.
 */
export function clsValue(qTilde: number, qAsimov: number): number {
  const q = Math.max(0, qTilde);
  const qa = Math.max(1e-300, qAsimov);
  const sq = Math.sqrt(q);
  const sqa = Math.sqrt(qa);
  let clsb: number;
  let clb: number;
  if (q <= qa) {
    clsb = normalCdf(-sq);
    clb = normalCdf(sqa - sq);
  } else {
    clsb = normalCdf(-(q + qa) / (2 * sqa));
    clb = normalCdf((qa - q) / (2 * sqa));
  }
  return clb > 0 ? clsb / clb : 1;
}

/**
 * Expected CLs upper limit in units of σ, at N standard deviations of the background-only
 * distribution (Cowan et al. 2011, the expected-limit bands; with N = 0 the median is
 * σ Φ⁻¹(1 − α/2)): μ_up = σ (Φ⁻¹(1 − α Φ(N)) + N).
 */
export function expectedLimitFactor(n: number, alpha = 0.05): number {
  return normalQuantile(1 - alpha * normalCdf(n)) + n;
}
