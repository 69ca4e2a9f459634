import { z } from 'zod';
import { fitStateSchema } from './fits';

/**
 * A scan over signal hypotheses (docs/fit-engine.md, "Scan over signal hypotheses"): one fit per
 * hypothesis of a model version, each with μ̂, the local discovery significance and the CLs
 * upper limit with its expected bands; then the global significance over the whole scan.
 */

export const hypothesisScanOptionsSchema = z.strictObject({
  /**
   * observed: each hypothesis fitted to the observed data (refused while the analysis is blinded).
   * expected: expected results only, on Asimov datasets built from the control-only fit
   * (signal regions' data are not read).
   */
  dataset: z.enum(['observed', 'expected']).default('observed'),
  /** CLs upper limit on μ with its expected bands, per hypothesis. */
  limit: z.boolean().default(true),
  /** The low reference level c₀ of q0 at which upcrossings are counted (Gross & Vitells, 2010). */
  referenceLevel: z.number().min(0.01).max(4).default(0.5),
  /** Background-only pseudo-experiments on which the upcrossings at c₀ are also counted (0: the observed scan only). */
  upcrossingToys: z.number().int().min(0).max(2000).default(0),
  /** Background-only pseudo-experiments for the trials factor directly (0: not asked for). */
  trialsToys: z.number().int().min(0).max(20000).default(0),
  seed: z.number().int().min(0).max(2 ** 31 - 1).default(1),
});
export type HypothesisScanOptions = z.infer<typeof hypothesisScanOptionsSchema>;
export type HypothesisScanOptionsInput = z.input<typeof hypothesisScanOptionsSchema>;

const num = z.number();
const bands = z.strictObject({ minus2: num, minus1: num, median: num, plus1: num, plus2: num });

export const hypothesisPointResultSchema = z.strictObject({
  key: z.string(),
  label: z.string(),
  value: num,
  /** Whether this hypothesis's fit converged; no number of a failed fit is given. */
  status: z.enum(['converged', 'failed']),
  message: z.string().nullable(),
  warnings: z.array(z.string()),
  /** Best-fit signal strength (observed scans only). */
  mu: z.strictObject({ value: num, error: num.nullable() }).nullable(),
  /** Local discovery test on the observed data: q0, p0 = Φ(−√q0) and Z = √q0 (observed scans only; μ̂ ≤ 0 gives q0 = 0). */
  local: z.strictObject({ q0: num, p0: num, z: num }).nullable(),
  /** Expected local Z and p0 for μ = 1 (Asimov). */
  expected: z.strictObject({ z: num, p0: num }).nullable(),
  /** 95 % CL CLs upper limit on μ: observed (observed scans only) and expected with ±1σ/±2σ bands. */
  limit: z.strictObject({ observed: num.nullable(), expected: bands.nullable() }).nullable(),
});
export type HypothesisPointResult = z.infer<typeof hypothesisPointResultSchema>;

export const globalSignificanceSchema = z.strictObject({
  /** The hypothesis with the largest local q0, and that q0 (u). */
  at: z.strictObject({ key: z.string(), value: num, q0: num, z: num, p0: num }),
  referenceLevel: num,
  upcrossings: z.strictObject({
    /** Upcrossings of q0 through c₀ along the observed scan (ordered by hypothesis value). */
    observed: z.number().int(),
    /** Mean number on background-only pseudo-experiments, with its standard error. */
    toys: z.strictObject({ count: z.number().int(), mean: num, error: num }).nullable(),
  }),
  /**
   * p_global ≈ p_local + ⟨N(c₀)⟩ e^{−(u − c₀)/2} (Gross & Vitells, Eur. Phys. J. C 70 (2010) 525,
   * one parameter of interest, one dimension), with ⟨N(c₀)⟩ from the toys when run, else from
   * the observed scan; the error propagates that of ⟨N(c₀)⟩ (Poisson √N for the observed count).
   */
  upcrossingEstimate: z.strictObject({ source: z.enum(['observed', 'toys']), p: num, pError: num, z: num, trialsFactor: num }),
  /** The fraction of background-only toys whose largest local q0 over the scan reaches u (binomial error). */
  fromToys: z.strictObject({ count: z.number().int(), exceeding: z.number().int(), p: num, pError: num, z: num.nullable(), trialsFactor: num.nullable() }).nullable(),
});
export type GlobalSignificance = z.infer<typeof globalSignificanceSchema>;

export const hypothesisScanResultSchema = z.strictObject({
  parameter: z.strictObject({ name: z.string(), unit: z.string() }),
  dataset: z.enum(['observed', 'expected']),
  points: z.array(hypothesisPointResultSchema),
  /** Observed scans with at least one converged point and μ̂ > 0 somewhere; null otherwise. */
  global: globalSignificanceSchema.nullable(),
  warnings: z.array(z.string()),
  seconds: num,
});
export type HypothesisScanResult = z.infer<typeof hypothesisScanResultSchema>;

/** What an analyst asks for: a scan of one frozen model version. */
export const startHypothesisScanSchema = z.strictObject({
  version: z.number().int().min(1),
  label: z.string().trim().max(200).default(''),
  options: hypothesisScanOptionsSchema.default({ dataset: 'observed', limit: true, referenceLevel: 0.5, upcrossingToys: 0, trialsToys: 0, seed: 1 }),
});
export type StartHypothesisScan = z.input<typeof startHypothesisScanSchema>;

/** A scan as the API sends it; `result` only once it succeeded and while nothing it read is blinded. */
export const hypothesisScanSchema = z.strictObject({
  id: z.number().int(),
  version: z.number().int(),
  label: z.string(),
  options: hypothesisScanOptionsSchema,
  /** The hypotheses the version declares. */
  hypotheses: z.number().int(),
  state: fitStateSchema,
  progress: z.number(),
  stage: z.string(),
  failure: z.string().nullable(),
  /** Why the result is held back (it read data of a region blinded now), else null. */
  withheld: z.string().nullable(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  result: hypothesisScanResultSchema.nullable(),
});
export type HypothesisScan = z.infer<typeof hypothesisScanSchema>;

/** A scan's options as stored: the options, plus the number of hypotheses its version declares. */
export function storedScanOptions(stored: unknown): { options: HypothesisScanOptions; hypotheses: number } {
  const { hypotheses = 0, ...options } = stored as { hypotheses?: number };
  return { options: hypothesisScanOptionsSchema.parse(options), hypotheses };
}
