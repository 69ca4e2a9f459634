import { z } from 'zod';
import { fitStateSchema } from './fits';

/**
 * Pseudo-experiments ("toys") of a fit: datasets drawn from the model at a generation point,
 * each fitted like the data, to check whether the asymptotic numbers of that fit can be trusted
 * (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, arXiv:1007.1727).
 *
 * Each toy draws every bin in the fit as Poisson around the expected yield at the generation
 * point, and every constraint's global observable as Gaussian around the generated value
 * (θ: width 1; γ: width σ_γ). A toy depends only on the run's seed and its index, so a run
 * gives the same numbers however its batches are spread over threads or machines.
 */

/** Where the toys are drawn from: the fit's best-fit point, or the best fit with μ held at a chosen value. */
export const toyHypothesisSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('best-fit') }),
  z.strictObject({ kind: z.literal('fixed-mu'), mu: z.number().min(-1e6).max(1e6) }),
]);
export type ToyHypothesis = z.infer<typeof toyHypothesisSchema>;

export const TOY_LIMITS = { min: 10, max: 20_000 } as const;

export const startToysSchema = z.strictObject({
  count: z.number().int().min(TOY_LIMITS.min).max(TOY_LIMITS.max),
  hypothesis: toyHypothesisSchema.default({ kind: 'best-fit' }),
  /** the same seed gives the same toys; chosen at random when left out */
  seed: z.number().int().min(0).max(2 ** 31 - 1).optional(),
  label: z.string().trim().max(200).default(''),
});
export type StartToys = z.input<typeof startToysSchema>;

/**
 * Counts per bin of a toy distribution and what the asymptotic formula expects in the same
 * bins (expected counts = toys used × probability of the bin). `below`/`above` count toys
 * outside the edges, with their expected counts too.
 */
export const histogramSchema = z.strictObject({
  edges: z.array(z.number()),
  counts: z.array(z.number().int()),
  expected: z.array(z.number()),
  below: z.number().int(),
  above: z.number().int(),
  expectedBelow: z.number(),
  expectedAbove: z.number(),
});
export type Histogram = z.infer<typeof histogramSchema>;

/**
 * One parameter's toy distribution, standardised as (x̂ − x_generated) / σ_ref with σ_ref the
 * reference fit's post-fit σ: asymptotically a standard normal.
 */
export const toyDistributionSchema = z.strictObject({
  name: z.string(),
  kind: z.enum(['poi', 'nuisance']),
  generated: z.number(),
  referenceError: z.number(),
  /** toys whose fit converged (the ones used) */
  n: z.number().int(),
  /** of the standardised values; expected 0 and 1 */
  mean: z.number(),
  sd: z.number(),
  /** standard errors of the mean and of the sd: σ/√n and σ/√(2(n−1)) */
  meanError: z.number(),
  sdError: z.number(),
  histogram: histogramSchema,
});
export type ToyDistribution = z.infer<typeof toyDistributionSchema>;

/**
 * q0 over the toys against its asymptotic distribution for data generated at μ′ (Cowan et al.
 * 2011, eq. 48–49): P(q0 = 0) = Φ(−μ′/σ) and F(q0) = Φ(√q0 − μ′/σ) above 0; at μ′ = 0 this is
 * ½δ(q0) + ½χ²₁. σ is σ_A from the Asimov dataset of the generation point (see sigmaMu), not
 * the curvature σ_μ that standardises μ̂ in `mu`.
 */
export const toyQ0Schema = z.strictObject({
  generatedMu: z.number(),
  /**
   * the σ of the comparison: at μ′ ≠ 0, σ_A = |μ′|/√q0,A, where q0,A is −2 ln λ(0) on the
   * Asimov dataset of the generation point (every bin at its expected yield, global
   * observables at the generated θ and γ), as Cowan et al. 2011, §5 (eqs. 29–32 or near them;
   * numbering from memory) obtain the σ of the asymptotic formulae. At μ′ = 0, where σ does not
   * enter, and where the Asimov fit failed (the summary then says so), the reference fit's
   * curvature σ_μ. (The field keeps its name so that stored summaries still parse.)
   */
  sigmaMu: z.number(),
  n: z.number().int(),
  zeroFraction: z.number(),
  expectedZeroFraction: z.number(),
  /** the q0 > 0 toys, binned in q0 */
  histogram: histogramSchema,
  /** the reference fit's q0, when it has one */
  observed: z.number().nullable(),
  /** P(q0 ≥ q0,obs | μ′): the fraction of toys, its binomial standard error, and the asymptotic value */
  toyPValue: z.number().nullable(),
  toyPValueError: z.number().nullable(),
  toysAtOrAbove: z.number().int().nullable(),
  asymptoticPValue: z.number().nullable(),
});
export type ToyQ0 = z.infer<typeof toyQ0Schema>;

export const toySummarySchema = z.strictObject({
  requested: z.number().int(),
  converged: z.number().int(),
  failed: z.number().int(),
  /** a few of the failed toys' messages, with their indices */
  failures: z.array(z.strictObject({ index: z.number().int(), message: z.string() })),
  generation: z.strictObject({ mu: z.number(), hypothesis: toyHypothesisSchema }),
  /** null when μ is held in the fit */
  mu: toyDistributionSchema.nullable(),
  pulls: z.array(toyDistributionSchema),
  /** null when μ is held, or μ = 0 lies outside its range */
  q0: toyQ0Schema.nullable(),
  warnings: z.array(z.string()),
});
export type ToySummary = z.infer<typeof toySummarySchema>;

export const toyRunSchema = z.object({
  id: z.number(),
  fitId: z.number(),
  label: z.string(),
  count: z.number().int(),
  hypothesis: toyHypothesisSchema,
  seed: z.number().int(),
  state: fitStateSchema,
  /** 0…1: toys done over toys asked for */
  progress: z.number(),
  stage: z.string(),
  failure: z.string().nullable(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  /** how many worker processes or threads took part (1 on a single machine with one thread) */
  workers: z.number().int(),
  summary: toySummarySchema.nullable(),
});
export type ToyRun = z.infer<typeof toyRunSchema>;
