import type { GlobalSignificance, HypothesisPointResult, HypothesisScanOptions } from '@shared/schemas/hypothesis-scan';
import { normalQuantile, normalSurvival } from './distributions';
import type { ScanToyOutcome } from './hypothesis-toys';

/**
 * The global significance of the largest local excess of a scan over signal hypotheses
 * (docs/fit-engine.md, "Scan over signal hypotheses").
 *
 * Upcrossings (E. Gross and O. Vitells, "Trial factors for the look elsewhere effect in high
 * energy physics", Eur. Phys. J. C 70 (2010) 525): for a test statistic q(θ) that is χ² with s
 * degrees of freedom at each point of the scan, P(max q > u) ≤ P(χ²_s > u) + ⟨N(u)⟩, where N(c)
 * is the number of upcrossings of the level c by q along the scan, and
 * ⟨N(u)⟩ = ⟨N(c₀)⟩ (u/c₀)^((s−1)/2) e^(−(u−c₀)/2), so that the mean count at a low level c₀,
 * where upcrossings are many and cheap to count, gives it at u. Here s = 1 (one dimension, the
 * hypotheses' parameter; μ the one parameter tested), and q is the one-sided q0 (0 for μ̂ ≤ 0),
 * whose tail is P(q0 > u) = ½ P(χ²₁ > u) = Φ(−√u) (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J.
 * C 71 (2011) 1554); the upcrossings of q0 above a level c > 0 are those of the two-sided statistic
 * on the side μ̂ > 0, with the same exponential in u. So
 *   p_global ≈ Φ(−√u) + ⟨N(c₀)⟩ e^(−(u−c₀)/2).
 * (The paper's equation numbers are not given here: they are not checked.)
 */

/** The toys of a scan: each toy's q0 at every hypothesis, and how many were asked for each estimate. */
export interface ToyScans {
  outcomes: ScanToyOutcome[];
  /** Toys with index below this count for the mean number of upcrossings. */
  upcrossingToys: number;
  /** Toys with index below this count for the fraction whose largest q0 reaches u. */
  trialsToys: number;
}

/**
 * Upcrossings of `level` by the sequence q (ordered by the hypotheses' value): the steps from
 * below the level to at or above it. A scan that starts above the level has not crossed it there;
 * that case is the first term of the formula, P(q0 > u).
 */
export function upcrossings(q: readonly number[], level: number): number {
  let n = 0;
  for (let i = 1; i < q.length; i++) if (q[i - 1] < level && q[i] >= level) n++;
  return n;
}

/** p_global ≈ Φ(−√u) + ⟨N(c₀)⟩ e^(−(u−c₀)/2) (Gross & Vitells 2010, one dimension, χ² with one degree of freedom, one-sided q0). */
export function upcrossingPValue(u: number, referenceLevel: number, meanUpcrossings: number): number {
  return normalSurvival(Math.sqrt(u)) + meanUpcrossings * Math.exp(-(u - referenceLevel) / 2);
}

/** Z = Φ⁻¹(1 − p), computed as −Φ⁻¹(p) to keep the precision of a small p. */
function zOf(p: number): number {
  return -normalQuantile(p);
}

const fmt = (x: number) => Number(x.toPrecision(3)).toString();

/**
 * The global significance over the scanned points (each with a local q0, ordered by value):
 * the largest local q0 u, the upcrossing estimate with ⟨N(c₀)⟩ from the toys when run (mean and
 * standard error) or else the observed scan's count N (error √N), and with trials toys the
 * fraction of toys whose largest q0 reaches u (binomial error). Notes go to `warnings`.
 */
export function globalSignificance(scanned: HypothesisPointResult[], options: Pick<HypothesisScanOptions, 'referenceLevel'>, toys: ToyScans | null, warnings: string[]): GlobalSignificance {
  const c0 = options.referenceLevel;
  const q = scanned.map((p) => p.local!.q0);
  let at = 0;
  q.forEach((x, k) => (x > q[at] ? (at = k) : 0));
  const u = q[at];
  const pLocal = normalSurvival(Math.sqrt(u));
  const observed = upcrossings(q, c0);
  if (u <= c0) warnings.push(`The largest local q0 (${fmt(u)}) is not above the reference level c₀ = ${c0}: the upcrossing estimate holds for u well above c₀, and says little here.`);

  // Toys: failed ones are left out of both estimates, and counted.
  const used = (limit: number) => (toys ? toys.outcomes.filter((o) => o.index < limit) : []);
  const failures = toys ? toys.outcomes.filter((o) => !o.ok) : [];
  if (failures.length > 0) {
    warnings.push(`${failures.length} of ${toys!.outcomes.length} background-only pseudo-experiments were left out because a fit did not converge (first: toy ${failures[0].index}, ${failures[0].message}).`);
  }

  let upcrossingToys: GlobalSignificance['upcrossings']['toys'] = null;
  if (toys && toys.upcrossingToys > 0) {
    const counts = used(toys.upcrossingToys)
      .filter((o) => o.ok)
      .map((o) => upcrossings(o.q0!, c0));
    const n = counts.length;
    if (n === 0) warnings.push('No background-only pseudo-experiment for the upcrossings converged: ⟨N(c₀)⟩ is the observed scan\'s count.');
    else {
      const mean = counts.reduce((a, b) => a + b, 0) / n;
      // standard error of the mean; with one toy, the Poisson error of its count
      const error = n > 1 ? Math.sqrt(counts.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1) / n) : Math.sqrt(mean);
      upcrossingToys = { count: n, mean, error };
    }
  }
  const meanN = upcrossingToys ? upcrossingToys.mean : observed;
  const meanError = upcrossingToys ? upcrossingToys.error : Math.sqrt(observed);
  if (!upcrossingToys && observed === 0) warnings.push(`q0 never crosses c₀ = ${c0} upwards along the observed scan: the upcrossing estimate is the local p-value alone; with toys for the upcrossings, ⟨N(c₀)⟩ would be measured.`);
  const factor = Math.exp(-(u - c0) / 2);
  let p = upcrossingPValue(u, c0, meanN);
  if (p > 1) {
    warnings.push(`The upcrossing estimate of the global p-value exceeds 1 (${fmt(p)}): the formula is an upper bound for large u, and p is given as 1.`);
    p = 1;
  }
  const zFrom = (pValue: number, what: string) => {
    if (pValue < 0.5) return zOf(pValue);
    warnings.push(`The global p-value ${what} is ${fmt(pValue)}, not below 0.5: its Z is given as 0 (no excess after the look-elsewhere effect).`);
    return 0;
  };
  const upcrossingEstimate: GlobalSignificance['upcrossingEstimate'] = {
    source: upcrossingToys ? 'toys' : 'observed',
    p,
    pError: meanError * factor,
    z: zFrom(p, 'from the upcrossings'),
    trialsFactor: p / pLocal,
  };

  let fromToys: GlobalSignificance['fromToys'] = null;
  if (toys && toys.trialsToys > 0) {
    const maxima = used(toys.trialsToys)
      .filter((o) => o.ok)
      .map((o) => o.q0!.reduce((a, b) => Math.max(a, b), 0));
    const n = maxima.length;
    if (n === 0) warnings.push('No background-only pseudo-experiment for the trials factor converged: it is not given.');
    else {
      const exceeding = maxima.filter((x) => x >= u).length;
      const pToys = exceeding / n;
      let z: number | null = null;
      if (exceeding === 0) {
        warnings.push(`No background-only pseudo-experiment of ${n} reached the largest local q0 (${fmt(u)}): the global p-value from toys is below 1/${n} = ${fmt(1 / n)} (below ${fmt(3 / n)} at 95 % CL), so its Z and trials factor are not given; more toys would measure it.`);
      } else z = zFrom(pToys, 'from the toys');
      fromToys = { count: n, exceeding, p: pToys, pError: Math.sqrt((pToys * (1 - pToys)) / n), z, trialsFactor: exceeding === 0 ? null : pToys / pLocal };
    }
  }

  const point = scanned[at];
  return {
    at: { key: point.key, value: point.value, q0: u, z: Math.sqrt(u), p0: pLocal },
    referenceLevel: c0,
    upcrossings: { observed, toys: upcrossingToys },
    upcrossingEstimate,
    fromToys,
  };
}
