import { z } from 'zod';
import { variantOptionsShape, variantReportSchema } from './variants';
import { REGION_ROLES } from '../vocabulary';

/**
 * Fit options and the fit result: what the engine accepts and returns, what the API serves
 * and what the command line writes. Every number is finite; a value that does not exist (a
 * held parameter's σ, a limit outside the bounds, anything of a failed fit) is null.
 * Definitions of every quantity: docs/likelihood.md §5–7 and docs/fit-engine.md.
 */

export const fitOptionsSchema = z.strictObject({
  /** Fit the uploaded data, or a pre-fit Asimov dataset (θ = 0, γ = 1, k at start, μ = asimovMu). */
  dataset: z.enum(['observed', 'asimov']).default('observed'),
  asimovMu: z.number().default(1),
  /** Fit the control regions alone; μ is then held at its start value and reported as fixed. */
  controlOnly: z.boolean().default(false),
  /** Regions (keys) left out of the likelihood. */
  excludeRegions: z.array(z.string()).default([]),
  /** Impacts per nuisance parameter: none, the instant estimate from V, or refits (post-fit and pre-fit). */
  impacts: z.enum(['none', 'quick', 'full']).default('quick'),
  /** Profile-likelihood scan of μ with its 68 % and 95 % crossings. */
  scan: z.boolean().default(false),
  scanPoints: z.number().int().min(3).max(201).default(21),
  /** 95 % CL upper limit on μ (CLs), observed and expected. */
  limit: z.boolean().default(false),
  /** Expected significance on the pre-fit Asimov dataset at μ = 1. */
  expected: z.boolean().default(true),
  /** Constraint (σ̂/1) below which a nuisance parameter is flagged as over-constrained. */
  overConstraintThreshold: z.number().gt(0).lt(1).default(0.5),
  /** Two parameters of interest (keys; μ is "mu") whose 2D profile-likelihood contour the fit draws at 68.27 % and 95 %. */
  contour: z.tuple([z.string().min(1), z.string().min(1)]).nullable().default(null),
  /** The variant of the fit: held parameters, statistics only, decorrelation, expected basis, hidden μ, breakdown (variants.ts). */
  ...variantOptionsShape,
});
export type FitOptions = z.infer<typeof fitOptionsSchema>;
export type FitOptionsInput = z.input<typeof fitOptionsSchema>;

const num = z.number();
const nullableNum = z.number().nullable();

export const parameterKindSchema = z.enum(['poi', 'normalisation', 'nuisance']);

/** Δμ for the two directions; null where that refit did not converge (a warning says so). */
export const impactPairSchema = z.strictObject({ up: nullableNum, down: nullableNum });

export const fitParameterSchema = z.strictObject({
  name: z.string(),
  label: z.string(),
  kind: parameterKindSchema,
  group: z.string().nullable(),
  value: num,
  /** σ = sqrt(V_jj); null when held. */
  error: nullableNum,
  fixed: z.boolean(),
  atBound: z.boolean(),
});
export type FitParameter = z.infer<typeof fitParameterSchema>;

export const nuisanceReportSchema = z.strictObject({
  name: z.string(),
  group: z.string().nullable(),
  fixed: z.boolean(),
  /** (θ̂ − 0)/1. */
  pull: num,
  /** σ̂/1; null when held. */
  constraint: nullableNum,
  overConstrained: z.boolean(),
  /** θ̂ / sqrt(1 − σ̂²) when σ̂ < 1 (Demortier & Lyons, CDF note 5776); null otherwise. */
  normalisedPull: nullableNum,
  /** ρ(μ, θ) σ_μ from V; null without a free μ. */
  quickImpact: nullableNum,
  /** Δμ with θ fixed at θ̂ ± σ̂, all else refitted; null unless full impacts were asked for. */
  postfitImpact: impactPairSchema.nullable(),
  /** Δμ with θ fixed at θ̂ ± 1 (clipped to the bounds). */
  prefitImpact: impactPairSchema.nullable(),
  /** 1 = largest impact; null when held or without μ. */
  rank: z.number().int().nullable(),
});
export type NuisanceReport = z.infer<typeof nuisanceReportSchema>;

export const gammaReportSchema = z.strictObject({
  name: z.string(),
  region: z.string(),
  bin: z.number().int(),
  value: num,
  error: nullableNum,
  /** Prior relative width σ_rb. */
  prior: num,
  fixed: z.boolean(),
  atBound: z.boolean(),
});

export const clippedBinSchema = z.strictObject({ region: z.string(), bin: z.number().int(), process: z.string() });

export const refitCountsSchema = z.strictObject({ warm: z.number().int(), newton: z.number().int(), cold: z.number().int(), failed: z.number().int() });

export const convergenceSchema = z.strictObject({
  iterations: z.number().int(),
  /** Newton decrement gᵀH⁻¹g/2 at the last point; null if it could not be computed. */
  decrement: nullableNum,
  nll: nullableNum,
  parametersAtBound: z.array(z.string()),
  clippedBins: z.array(clippedBinSchema),
  /** Condition number of the (μ, k, θ) Hessian scaled to unit diagonal. */
  conditionNumber: nullableNum,
  warnings: z.array(z.string()),
  /** Why the fit failed (null when converged). */
  failure: z.string().nullable(),
  seconds: num,
  /**
   * Conditional fits (impacts, scan points, crossings, q0, limits) by the rung of the refit ladder
   * that met the stop test (warm quasi-Newton, Newton from where it stood, cold fit), and those
   * where every rung failed. Absent in results stored before the ladder existed.
   */
  refits: refitCountsSchema.optional(),
  /**
   * Where the minimum sits on a clip edge: whether the edge was kept held or leaving it reached
   * a lower NLL ('released'), with the NLL of each (releasedNll null when no side lowered the
   * NLL). Null or absent when no clip edge was met.
   */
  clipEdge: z.strictObject({ kept: z.enum(['held', 'released']), heldNll: num, releasedNll: nullableNum }).nullable().optional(),
});

export const correlationSchema = z.strictObject({
  names: z.array(z.string()),
  /** Row-major, names.length². */
  values: z.array(num),
});

export const intervalSchema = z.strictObject({ low: nullableNum, high: nullableNum });

export const scanPointSchema = z.strictObject({ value: num, q: num });

export const parameterScanSchema = z.strictObject({
  parameter: z.string(),
  /** Why no scan could be made (the fit failed); null otherwise. */
  failure: z.string().nullable(),
  bestFit: num,
  error: nullableNum,
  points: z.array(scanPointSchema),
  /** Where q = 1 and q = 3.84 (absolute values of the parameter; null outside its bounds). */
  crossings68: intervalSchema,
  crossings95: intervalSchema.nullable(),
});
export type ParameterScan = z.infer<typeof parameterScanSchema>;

/** One nuisance parameter's impact on a parameter of interest besides μ (as the nuisance table's are on μ). */
export const poiImpactSchema = z.strictObject({
  name: z.string(),
  /** ρ(poi, θ) σ_poi from V. */
  quickImpact: nullableNum,
  postfitImpact: impactPairSchema.nullable(),
  prefitImpact: impactPairSchema.nullable(),
  /** 1 = largest impact on this parameter; null when held. */
  rank: z.number().int().nullable(),
});
export type PoiImpact = z.infer<typeof poiImpactSchema>;

/** A parameter of interest (μ first, then those the model declares besides it). */
export const poiReportSchema = z.strictObject({
  name: z.string(),
  label: z.string(),
  value: num,
  fixed: z.boolean(),
  /** sqrt(V_ii) from the covariance at the minimum; null when held. */
  error: nullableNum,
  /** Where q = 1 on each side (absolute values; null past a bound); null when held. */
  interval68: intervalSchema.nullable(),
  /** Where q = 3.84 on each side (absolute values; null past a bound); null when held. Absent in older results. */
  interval95: intervalSchema.nullable().optional(),
  /** Its profile-likelihood scan, when the fit asked for scans (μ's is the result's own scan). */
  scan: parameterScanSchema.nullable().optional(),
  /**
   * The impact of every nuisance parameter on this parameter of interest, in the nuisance table's
   * order, from the same refits as μ's (each refit's minimum carries every parameter of interest).
   * Null for μ, whose impacts are the nuisance table's; absent in older results.
   */
  impacts: z.array(poiImpactSchema).nullable().optional(),
});

/** The parameters of interest of a model that declares any besides μ. */
export const poiSectionSchema = z.strictObject({
  list: z.array(poiReportSchema),
  /** Among the free parameters of interest, in list order. */
  correlation: correlationSchema,
});

export const summarySchema = z.strictObject({
  mu: z.strictObject({
    value: num,
    fixed: z.boolean(),
    /** σ_μ = sqrt(V_μμ). */
    error: nullableNum,
    /** Offsets from μ̂ to the q = 1 and q = 3.84 crossings of the scan (low ≤ 0 ≤ high); null without a scan or outside the bounds. */
    interval68: intervalSchema.nullable(),
    interval95: intervalSchema.nullable(),
    stat: nullableNum,
    syst: nullableNum,
  }),
  discovery: z.strictObject({ q0: num, z: num, p0: num }).nullable(),
  expected: z.strictObject({ asimovMu: num, q0: num, z: num, p0: num }).nullable(),
  limit: z
    .strictObject({
      cl: num,
      observed: nullableNum,
      expected: z.strictObject({ minus2: nullableNum, minus1: nullableNum, median: nullableNum, plus1: nullableNum, plus2: nullableNum }),
    })
    .nullable(),
  goodnessOfFit: z.strictObject({ t: num, dof: z.number().int(), p: nullableNum }),
});

export const groupImpactSchema = z.strictObject({ group: z.string(), impact: num, parameters: z.array(z.string()) });


export const informationSchema = z.strictObject({
  parameter: z.string(),
  /** Σ over bins of (∂ν/∂θ)²/ν plus the constraint's 1. */
  total: num,
  constraint: num,
  /** 1/sqrt(total): the width without correlations, to compare with σ̂. */
  width: num,
  regions: z.array(
    z.strictObject({
      region: z.string(),
      information: num,
      bins: z.array(z.strictObject({ bin: z.number().int(), information: num })),
    }),
  ),
});

export const yieldSeriesSchema = z.strictObject({ values: z.array(num), errors: z.array(num) });

export const regionYieldsSchema = z.strictObject({
  region: z.string(),
  role: z.enum(REGION_ROLES),
  inFit: z.boolean(),
  edges: z.array(num),
  processes: z.array(z.strictObject({ process: z.string() }).extend(yieldSeriesSchema.shape)),
  total: yieldSeriesSchema,
});

export const dataRegionSchema = z.strictObject({ region: z.string(), inFit: z.boolean(), values: z.array(num).nullable() });

/** A line of a contour: its points (a, b) in order. */
export const contourLineSchema = z.array(z.tuple([num, num]));

export const profileContourSchema = z.strictObject({
  parameters: z.tuple([z.string(), z.string()]),
  /** Why no contour could be made (the fit failed); null otherwise. */
  failure: z.string().nullable(),
  bestFit: z.tuple([num, num]),
  errors: z.tuple([nullableNum, nullableNum]),
  /** Grid values of the first (a) and second (b) parameter. */
  a: z.array(num),
  b: z.array(num),
  /** q(a_i, b_j) at q[j][i]; null where the conditional fit failed. */
  q: z.array(z.array(nullableNum)),
  /** q = 2.30 (68.27 %) and q = 5.99 (95 %) for two degrees of freedom. */
  levels: z.array(z.strictObject({ cl: num, q: num, lines: z.array(contourLineSchema) })),
  points: z.strictObject({ converged: z.number().int(), failed: z.number().int() }),
});
export type ProfileContour = z.infer<typeof profileContourSchema>;

export const fitResultSchema = z.strictObject({
  status: z.enum(['converged', 'failed']),
  model: z.strictObject({ name: z.string(), regionsInFit: z.array(z.string()) }),
  options: fitOptionsSchema,
  convergence: convergenceSchema,
  /** μ, the floating normalisations and the nuisance parameters (empty for a failed fit). */
  parameters: z.array(fitParameterSchema),
  nuisance: z.array(nuisanceReportSchema),
  gammas: z.strictObject({
    count: z.number().int(),
    maxAbsPull: nullableNum,
    list: z.array(gammaReportSchema),
  }),
  correlation: correlationSchema.nullable(),
  summary: summarySchema.nullable(),
  groupedImpacts: z.array(groupImpactSchema),
  scan: parameterScanSchema.nullable(),
  information: z.array(informationSchema),
  yields: z.strictObject({ prefit: z.array(regionYieldsSchema), postfit: z.array(regionYieldsSchema).nullable() }),
  data: z.strictObject({ dataset: z.enum(['observed', 'asimov']), asimovMu: nullableNum, regions: z.array(dataRegionSchema) }),
  /** Every parameter of interest, when the model declares any besides μ (absent otherwise). */
  poi: poiSectionSchema.optional(),
  /** The 2D profile-likelihood contour of the pair the options name (absent or null otherwise). */
  contour: profileContourSchema.nullable().optional(),
  /** What variant this fit is (absent in results stored before variants existed: the nominal fit). */
  variant: variantReportSchema.optional(),
});
export type FitResult = z.infer<typeof fitResultSchema>;

