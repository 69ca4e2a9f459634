import type { Histogram, ToyDistribution, ToyQ0, ToySummary } from '@shared/schemas/toys';
import { normalCdf } from './distributions';
import type { ToyOutcome, ToyParameter, ToyPlan } from './toys';

/**
 * What a set of toys says about the asymptotic numbers of the fit (shared/schemas/toys.ts):
 * standardised μ̂ and pulls (x̂ − x_generated)/σ_ref against a standard normal, and q0 against
 * its asymptotic distribution for data drawn at μ′ (Cowan, Cranmer, Gross, Vitells, Eur.
 * Phys. J. C 71 (2011) 1554, arXiv:1007.1727, eqs. 48–49):
 *   P(q0 = 0) = Φ(−μ′/σ),   F(q0) = Φ(√q0 − μ′/σ) for q0 > 0,
 * with σ = σ_A = |μ′|/√q0,A from the Asimov dataset of the generation point (their §5; the
 * plan's sigmaQ0), while μ̂ is standardised by the curvature σ_μ of the reference fit.
 * Only toys whose fits converged are used; the failed ones are counted and a few listed.
 */

/** Standardised values are binned in 32 bins over −4…4 (common practice, no source). */
const Z_EDGES = Array.from({ length: 33 }, (_, j) => -4 + j * 0.25);
const Q0_BINS = 32;
const FAILURES_LISTED = 5;
/** Below this many toys at or beyond q0,obs the toy p-value is called rough: its relative error 1/√k exceeds 10 % (common practice, no source). */
const ROUGH_P_COUNT = 100;
/** Deviations beyond this many standard errors are pointed out. */
const NOTABLE = 3;

/** P(x1 ≤ Z < x2) for a standard normal Z, from the smaller tail so that far tails keep their precision. */
function normalBetween(x1: number, x2: number): number {
  return x1 >= 0 ? normalCdf(-x1) - normalCdf(-x2) : normalCdf(x2) - normalCdf(x1);
}

/**
 * Counts in [e_j, e_j+1), below e_0 and at or above the last edge, with the expected counts
 * n·P(bin) from `between(a, b)` = P(a ≤ X < b) (a = −∞, b = ∞ at the ends).
 */
function histogram(values: number[], edges: number[], n: number, between: (a: number, b: number) => number): Histogram {
  const nb = edges.length - 1;
  const counts = new Array<number>(nb).fill(0);
  let below = 0;
  let above = 0;
  const width = (edges[nb] - edges[0]) / nb;
  for (const x of values) {
    if (x < edges[0]) below++;
    else if (x >= edges[nb]) above++;
    else {
      // Uniform edges: direct index, corrected at the boundaries against rounding.
      let j = Math.min(nb - 1, Math.floor((x - edges[0]) / width));
      while (j > 0 && x < edges[j]) j--;
      while (j < nb - 1 && x >= edges[j + 1]) j++;
      counts[j]++;
    }
  }
  return {
    edges: [...edges],
    counts,
    expected: counts.map((_, j) => n * between(edges[j], edges[j + 1])),
    below,
    above,
    expectedBelow: n * between(-Infinity, edges[0]),
    expectedAbove: n * between(edges[nb], Infinity),
  };
}

function distribution(p: ToyParameter, values: number[]): ToyDistribution {
  const z = values.map((x) => (x - p.generated) / p.referenceError);
  const n = z.length;
  const mean = n > 0 ? z.reduce((s, x) => s + x, 0) / n : 0;
  const sd = n > 1 ? Math.sqrt(z.reduce((s, x) => s + (x - mean) * (x - mean), 0) / (n - 1)) : 0;
  return {
    name: p.name,
    kind: p.kind,
    generated: p.generated,
    referenceError: p.referenceError,
    n,
    mean,
    sd,
    meanError: n > 0 ? sd / Math.sqrt(n) : 0,
    sdError: n > 1 ? sd / Math.sqrt(2 * (n - 1)) : 0,
    histogram: histogram(z, Z_EDGES, n, normalBetween),
  };
}

/** Whether the standardised distribution's mean or width is more than NOTABLE standard errors from 0 or 1. */
function offStandard(d: ToyDistribution): { mean: boolean; sd: boolean } {
  if (d.n < 10) return { mean: false, sd: false };
  return { mean: Math.abs(d.mean) > NOTABLE * d.meanError, sd: Math.abs(d.sd - 1) > NOTABLE * d.sdError };
}

/**
 * σ of the asymptotic q0 distribution: the plan's σ_A, or σ_μ for a plan made before plans
 * carried it (stored runs).
 */
function q0Sigma(plan: ToyPlan): number | null {
  return plan.sigmaQ0 ?? plan.sigmaMu;
}

function q0Summary(plan: ToyPlan, sigma: number, q0s: number[], warnings: string[]): ToyQ0 {
  const r = plan.generatedMu / sigma;
  const n = q0s.length;
  const zeros = q0s.filter((q) => q === 0).length;
  const zeroFraction = n > 0 ? zeros / n : 0;
  const expectedZeroFraction = normalCdf(-r);
  // √q0 of the q0 > 0 toys follows N(μ′/σ, 1) above 0: cover it to 4 σ beyond its peak.
  const upper = Math.ceil((Math.max(r, 0) + 4) ** 2);
  const edges = Array.from({ length: Q0_BINS + 1 }, (_, j) => (upper * j) / Q0_BINS);
  const continuous = (a: number, b: number) => (b <= 0 ? 0 : normalBetween(Math.sqrt(Math.max(a, 0)) - r, Math.sqrt(b) - r));
  const positive = q0s.filter((q) => q > 0);

  if (n >= 10) {
    // binomial error, at least one toy's worth, so that a single toy at q0 = 0 far from μ′ = 0 is no alarm
    const error = Math.max(Math.sqrt((expectedZeroFraction * (1 - expectedZeroFraction)) / n), 1 / n);
    if (Math.abs(zeroFraction - expectedZeroFraction) > NOTABLE * error) {
      warnings.push(
        `${pct(zeroFraction)} of the toys have q0 = 0 (μ̂ ≤ 0), where the asymptotic formula expects ${pct(expectedZeroFraction)} ± ${pct(error)}: the asymptotic distribution of q0 does not describe this fit well.`,
      );
    }
  }
  const observed = plan.q0Observed;
  let toyPValue: number | null = null;
  let toyPValueError: number | null = null;
  let toysAtOrAbove: number | null = null;
  let asymptoticPValue: number | null = null;
  if (observed !== null) {
    // 1 − F(q0,obs) = Φ(μ′/σ − √q0,obs); every toy has q0 ≥ 0.
    asymptoticPValue = observed > 0 ? normalCdf(r - Math.sqrt(observed)) : 1;
    if (n > 0) {
      toysAtOrAbove = q0s.filter((q) => q >= observed).length;
      toyPValue = toysAtOrAbove / n;
      toyPValueError = Math.sqrt((toyPValue * (1 - toyPValue)) / n);
      if (observed > 0 && toysAtOrAbove === 0) {
        warnings.push(
          `No toy reached the observed q0 = ${fmt(observed)}: the toy p-value is only known to lie below about ${fmt(3 / n)} (3/N, the 95 % CL upper limit when none of N is seen), and its binomial error of 0 says nothing; run more toys.`,
        );
      } else if (observed > 0 && toysAtOrAbove < ROUGH_P_COUNT) {
        warnings.push(
          `Only ${toysAtOrAbove} toy(s) lie at or beyond the observed q0 = ${fmt(observed)}: the toy p-value is rough (relative error about 1/√${toysAtOrAbove} = ${pct(1 / Math.sqrt(toysAtOrAbove))}); run more toys for a firm value.`,
        );
      }
      // Binomial error of a fraction with the asymptotic probability, so that no toy beyond q0,obs still counts.
      const spread = Math.sqrt((asymptoticPValue * (1 - asymptoticPValue)) / n);
      if (observed > 0 && n >= 10 && Math.abs(toyPValue - asymptoticPValue) > NOTABLE * Math.max(spread, toyPValueError)) {
        warnings.push(
          `The toy p-value ${fmt(toyPValue)} ± ${fmt(toyPValueError)} differs from the asymptotic ${fmt(asymptoticPValue)} by more than ${NOTABLE} standard errors: for this fit the asymptotic distribution of q0 (${describeSigma(plan)}) is not a good guide at q0,obs; the toys' value is the more reliable one.`,
        );
      }
    }
  }
  return {
    generatedMu: plan.generatedMu,
    sigmaMu: sigma,
    n,
    zeroFraction,
    expectedZeroFraction,
    histogram: histogram(positive, edges, n, continuous),
    observed,
    toyPValue,
    toyPValueError,
    toysAtOrAbove,
    asymptoticPValue,
  };
}

/** Summarises the outcomes of a run of `requested` toys drawn with `plan`. */
export function summariseToys(plan: ToyPlan, outcomes: readonly ToyOutcome[], requested: number): ToySummary {
  const warnings = [...plan.warnings];
  const ok = outcomes.filter((o) => o.ok).sort((a, b) => a.index - b.index);
  const failedToys = outcomes.filter((o) => !o.ok).sort((a, b) => a.index - b.index);
  const failures = failedToys.slice(0, FAILURES_LISTED).map((o) => ({ index: o.index, message: o.message ?? 'the fit failed' }));
  const ran = outcomes.length;

  if (ran < requested) warnings.push(`${requested - ran} of the ${requested} toys asked for did not run; the numbers below use the ${ran} that did.`);
  if (failedToys.length > 0.01 * ran) {
    warnings.push(
      `${failedToys.length} of ${ran} toys (${pct(failedToys.length / ran)}) failed to converge and are left out: if the failures favour some kinds of dataset, the distributions below are biased.`,
    );
  }
  if (ok.length < 100) {
    warnings.push(
      ok.length === 0
        ? 'No toy converged: there is nothing to compare with the asymptotic formulae.'
        : `Only ${ok.length} toy(s) converged: means and widths are known to about 1/√N = ${pct(1 / Math.sqrt(ok.length))} only.`,
    );
  }

  const mu = plan.mu ? distribution(plan.mu, ok.filter((o) => o.mu !== null).map((o) => o.mu!)) : null;
  const pulls = plan.nuisance.map((p, k) => distribution(p, ok.filter((o) => o.theta.length === plan.nuisance.length).map((o) => o.theta[k])));

  if (mu) {
    const off = offStandard(mu);
    if (off.mean) warnings.push(`μ̂ is biased in the toys: (μ̂ − μ′)/σ_μ has mean ${fmt(mu.mean)} ± ${fmt(mu.meanError)}, where the asymptotic formulae assume 0.`);
    if (off.sd) {
      warnings.push(
        `The spread of μ̂ in the toys is ${fmt(mu.sd)} ± ${fmt(mu.sdError)} times the fit's σ_μ: the error from the curvature ${mu.sd > 1 ? 'underestimates' : 'overestimates'} the spread of μ̂.`,
      );
    }
  }
  const offPulls = pulls.filter((d) => {
    const off = offStandard(d);
    return off.mean || off.sd;
  });
  if (offPulls.length > 0) {
    // Each of mean and width lies beyond 3 standard errors with probability 0.27 % by chance.
    const chance = pulls.length * 2 * 2 * normalCdf(-NOTABLE);
    const names = offPulls.slice(0, 5).map((d) => d.name);
    warnings.push(
      `${offPulls.length} of ${pulls.length} nuisance parameter(s) have a toy pull mean or width more than ${NOTABLE} standard errors from 0 or 1, where chance alone would give about ${fmt(chance)}: ${names.join(', ')}${offPulls.length > 5 ? ', …' : ''}.`,
    );
  }

  const q0s = ok.filter((o) => o.q0 !== null).map((o) => o.q0!);
  const sigma = q0Sigma(plan);
  const q0 = plan.q0Defined && sigma !== null ? q0Summary(plan, sigma, q0s, warnings) : null;

  return {
    requested,
    converged: ok.length,
    failed: failedToys.length,
    failures,
    generation: { mu: plan.generatedMu, hypothesis: plan.hypothesis },
    mu,
    pulls,
    q0,
    warnings,
  };
}

/** Which asymptotic q0 distribution the comparison used, for the warnings. */
function describeSigma(plan: ToyPlan): string {
  if (plan.generatedMu === 0) return '½δ(q0) + ½χ²₁ at μ′ = 0';
  if (plan.q0Asimov !== null && plan.q0Asimov !== undefined) return 'with σ = σ_A from the Asimov dataset of the generation point';
  return 'with σ = σ_μ of the reference fit, as σ_A was not available';
}

function fmt(x: number): string {
  return Number(x.toPrecision(3)).toString();
}

function pct(x: number): string {
  return `${Number((100 * x).toPrecision(3))} %`;
}
