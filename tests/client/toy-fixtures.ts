import { toyRunSchema, toySummarySchema, type Histogram, type ToyDistribution, type ToyRun, type ToySummary } from '@shared/schemas/toys';
import { normalCdf } from '../../src/lib/normal';

/** Expected counts of `n` toys in each bin under a probability `p(lo, hi)`, with the counts themselves rounded from them. */
function histogram(n: number, edges: number[], p: (lo: number, hi: number) => number, below: number, above: number): Histogram {
  const expected = edges.slice(1).map((hi, i) => n * p(edges[i], hi));
  return {
    edges,
    counts: expected.map((e) => Math.round(e)),
    expected,
    below: Math.round(n * below),
    above: Math.round(n * above),
    expectedBelow: n * below,
    expectedAbove: n * above,
  };
}

const STANDARD_EDGES = Array.from({ length: 17 }, (_, i) => -4 + i * 0.5);

/** A standardised distribution of `n` toys binned from −4 to 4, with the mean and sd given. */
export function distribution(name: string, overrides: Partial<ToyDistribution> = {}): ToyDistribution {
  const n = overrides.n ?? 980;
  return {
    name,
    kind: 'nuisance',
    generated: 0,
    referenceError: 0.8,
    n,
    mean: 0,
    sd: 1,
    meanError: 1 / Math.sqrt(n),
    sdError: 1 / Math.sqrt(2 * (n - 1)),
    histogram: histogram(n, STANDARD_EDGES, (lo, hi) => normalCdf(hi) - normalCdf(lo), normalCdf(-4), normalCdf(-4)),
    ...overrides,
  };
}

/** q0 > 0 of `n` toys at μ′ = 0, binned from 0 to 20: each bin holds Φ(√hi) − Φ(√lo) of them (½χ²₁). */
function q0Histogram(n: number): Histogram {
  const edges = Array.from({ length: 21 }, (_, i) => i);
  return histogram(n, edges, (lo, hi) => normalCdf(Math.sqrt(hi)) - normalCdf(Math.sqrt(lo)), 0, 1 - normalCdf(Math.sqrt(20)));
}

/**
 * 1 000 toys drawn with μ held at 0, of which 980 converged. The fit's q0 is 6.25 (asymptotic
 * p = 1 − Φ(2.5) = 0.00621); 12 toys reach it (p = 0.0122 ± 0.0035, within 3 errors). jes has its
 * mean 4.7 errors above 0 and lumi its sd 4.3 errors below 1; theory_scale is as expected.
 */
export function toySummary(overrides: Partial<ToySummary> = {}): ToySummary {
  const n = 980;
  const toy = 12 / n;
  return toySummarySchema.parse({
    requested: 1000,
    converged: n,
    failed: 20,
    failures: [
      { index: 17, message: 'The minimiser stopped after 500 iterations without converging.' },
      { index: 412, message: 'The Hessian is not positive definite at the last point.' },
    ],
    generation: { mu: 0, hypothesis: { kind: 'fixed-mu', mu: 0 } },
    mu: distribution('mu', { kind: 'poi', generated: 0, referenceError: 0.3, mean: 0.02, sd: 1.01 }),
    pulls: [
      distribution('theory_scale', { mean: 0.01, sd: 0.99 }),
      distribution('jes', { mean: 0.15, sd: 1.02, referenceError: 0.4 }),
      distribution('lumi', { mean: -0.02, sd: 0.9 }),
    ],
    q0: {
      generatedMu: 0,
      sigmaMu: 0.3,
      n,
      zeroFraction: 0.51,
      expectedZeroFraction: 0.5,
      histogram: q0Histogram(n),
      observed: 6.25,
      toyPValue: toy,
      toyPValueError: Math.sqrt((toy * (1 - toy)) / n),
      toysAtOrAbove: 12,
      asymptoticPValue: 1 - normalCdf(2.5),
    },
    warnings: ['20 toys failed to converge; they are left out of every number.'],
    ...overrides,
  });
}

export function toyRun(overrides: Partial<ToyRun> = {}): ToyRun {
  return toyRunSchema.parse({
    id: 3,
    fitId: 7,
    label: 'Background only',
    count: 1000,
    hypothesis: { kind: 'fixed-mu', mu: 0 },
    seed: 12345,
    state: 'succeeded',
    progress: 1,
    stage: 'done',
    failure: null,
    createdAt: '2026-03-02T09:00:00Z',
    createdBy: 'Otto Brannholm',
    startedAt: '2026-03-02T09:00:01Z',
    finishedAt: '2026-03-02T09:04:01Z',
    workers: 4,
    summary: toySummary(),
    ...overrides,
  });
}
