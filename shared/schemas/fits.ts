import { z } from 'zod';
import { FIT_STATES } from '../vocabulary';
import { correlationSchema, fitOptionsSchema, fitResultSchema, informationSchema } from './fit';

/** Contracts of model versions, fit runs, results, exports and comparisons. */

export const modelVersionSchema = z.object({
  number: z.number(),
  note: z.string(),
  /** frozen by a convener as the version put forward for approval */
  forApproval: z.boolean(),
  sha256: z.string(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
  counts: z.object({ regions: z.number(), processes: z.number(), systematics: z.number() }),
  /** The register as frozen: entries per review state (null for versions frozen before it was kept). */
  register: z.record(z.string(), z.number()).nullable(),
  /** Frozen for approval with open items: the convener's reason and the items as they stood. */
  override: z.object({ reason: z.string(), by: z.string(), openItems: z.array(z.string()) }).nullable(),
});
export type ModelVersion = z.infer<typeof modelVersionSchema>;

export const freezeVersionSchema = z.strictObject({
  note: z.string().max(2000).default(''),
  forApproval: z.boolean().default(false),
  /**
   * For approval while entries are not accepted or questions are open: the convener's written
   * reason to freeze it nonetheless (shown on the version and in the approval pack).
   */
  overrideReason: z.string().trim().max(4000).optional(),
  /**
   * For each shape effect whose nominal changed since it was uploaded (stale), how the version
   * keeps it: `relative` rescales the stored variation bin by bin by new/old nominal, `absolute`
   * keeps its yields. Every stale effect needs one; the choice is recorded in the revision.
   */
  staleChoices: z.array(z.strictObject({ effectId: z.number().int().positive(), keep: z.enum(['relative', 'absolute']) })).max(10_000).default([]),
});
export type FreezeVersion = z.input<typeof freezeVersionSchema>;

export const fitStateSchema = z.enum(FIT_STATES);
export type FitState = z.infer<typeof fitStateSchema>;

export const startFitSchema = z.strictObject({
  /** the model version number to fit */
  version: z.number().int().positive(),
  label: z.string().trim().max(200).default(''),
  options: fitOptionsSchema.default(fitOptionsSchema.parse({})),
});
export type StartFit = z.input<typeof startFitSchema>;

/** A fit as listed: state, progress and, once converged, the headline numbers. */
export const fitSummarySchema = z.object({
  id: z.number(),
  label: z.string(),
  version: z.number(),
  state: fitStateSchema,
  /** 0…1 */
  progress: z.number(),
  stage: z.string(),
  options: fitOptionsSchema,
  failure: z.string().nullable(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  /** only for a converged fit: μ̂ ± σ_μ and the observed significance */
  headline: z
    .object({
      mu: z.number(),
      muError: z.number().nullable(),
      z: z.number().nullable(),
      warnings: z.number(),
    })
    .nullable(),
  /**
   * Why none of this fit's numbers are sent: it read the observed counts of regions the analysis
   * keeps blinded (a fit made through a version that gave such a region another role). Null otherwise.
   */
  withheld: z.string().nullable(),
  /** A check run from a parameter's diagnosis: the fit and parameter it checks. Null otherwise. */
  checkOf: z.object({ fitId: z.number(), parameter: z.string() }).nullable(),
  /**
   * What computed it (set when it starts; null before, and for fits stored before this was kept):
   * the package version, the SHA-256 of the engine's sources, the SHA-256 of its exact input.
   */
  provenance: z.object({ engineVersion: z.string(), engineHash: z.string(), inputSha256: z.string() }).nullable(),
  /** The fit this one reruns with the same version and options (Reproduce), else null. */
  reproduces: z.number().nullable(),
});
export type FitSummary = z.infer<typeof fitSummarySchema>;

/** A rerun against the fit it reproduces: every number that differs (none is expected). */
export const reproductionSchema = z.object({
  fitId: z.number(),
  of: z.number(),
  sameEngine: z.boolean(),
  sameInput: z.boolean(),
  /** Numbers compared, across the whole result (its large parts too). */
  compared: z.number(),
  /** Places that differ: numbers, texts, or structure; at most 200 listed, `count` counts all. */
  count: z.number(),
  differences: z.array(z.object({ path: z.string(), original: z.unknown(), rerun: z.unknown() })),
});
export type Reproduction = z.infer<typeof reproductionSchema>;

/**
 * The stored result without its large parts, which only their own views read: the correlation
 * matrix, the per-bin information of every parameter, the per-bin yields and the list of
 * per-bin γ parameters (megabytes for a large model; the γ count and largest pull stay).
 * Everything the summary, pulls, impacts and groups show.
 */
export const fitResultHeadSchema = fitResultSchema.omit({ correlation: true, information: true, yields: true }).extend({
  gammas: fitResultSchema.shape.gammas.omit({ list: true }),
});
export type FitResultHead = z.infer<typeof fitResultHeadSchema>;

/** The large parts of a result, each at GET /api/analyses/:slug/fits/:id/parts/:part. */
export const fitPartSchemas = {
  correlation: correlationSchema.nullable(),
  information: z.array(informationSchema),
  yields: fitResultSchema.shape.yields,
  gammas: fitResultSchema.shape.gammas.shape.list,
} as const;
export type FitPartName = keyof typeof fitPartSchemas;
export type FitPart<K extends FitPartName> = z.infer<(typeof fitPartSchemas)[K]>;
export const fitPartNames = Object.keys(fitPartSchemas) as FitPartName[];

/**
 * A fit with the head of its stored result. `result` is null until the job ends; for a failed
 * fit it holds the convergence report and no numbers that depend on the failed minimum. While
 * the analysis is blinded, observed signal-region counts are removed from `result.data`.
 */
export const fitDetailSchema = fitSummarySchema.extend({ result: fitResultHeadSchema.nullable() });
export type FitDetail = z.infer<typeof fitDetailSchema>;

const delta = z.object({ a: z.number().nullable(), b: z.number().nullable(), delta: z.number().nullable() });

/** Two fits side by side: the changes in μ̂ and per parameter, largest change first. */
export const fitComparisonSchema = z.object({
  a: fitSummarySchema,
  b: fitSummarySchema,
  mu: delta,
  muError: delta,
  parameters: z.array(
    z.object({
      name: z.string(),
      group: z.string().nullable(),
      /** present in only one of the two fits */
      only: z.enum(['a', 'b']).nullable(),
      pull: delta,
      constraint: delta,
      /** max(|Δμ+|, |Δμ−|) of the post-fit impact (quick impact where no full impacts were run) */
      impact: delta,
      /** the largest |delta| of pull, constraint and impact: the sort key */
      change: z.number(),
    }),
  ),
});
export type FitComparison = z.infer<typeof fitComparisonSchema>;

export const exportTableSchema = z.enum(['summary', 'parameters', 'nuisance', 'groups', 'correlation', 'yields', 'systematics', 'pulls']);
export const exportFormatSchema = z.enum(['json', 'csv', 'latex']);
export type ExportTable = z.infer<typeof exportTableSchema>;
