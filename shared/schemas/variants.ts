import { z } from 'zod';

/**
 * Fit variants (docs/likelihood.md §9): the checks a convener runs beside the nominal fit. Each
 * changes the likelihood or the data, never a definition; the result records which variant it is
 * and, for expected numbers, their basis.
 */

/** A parameter (μ, a floating normalisation or a nuisance parameter, by name) held at a number, or at its best fit to the same data. */
export const heldParameterSchema = z.strictObject({ parameter: z.string().min(1).max(128), value: z.union([z.number().finite(), z.literal('best')]) });
export type HeldParameter = z.infer<typeof heldParameterSchema>;

/** A systematic split into independent parts, one per region (or process) in which it has an effect. */
export const decorrelationSchema = z.strictObject({ parameter: z.string().min(1).max(128), by: z.enum(['region', 'process']) });
export type Decorrelation = z.infer<typeof decorrelationSchema>;

export const variantOptionsShape = {
  /** §9.1: parameters held at a value or at `best`; they leave V, the impacts and the ranking */
  hold: z.array(heldParameterSchema).max(1000).default([]),
  /** §9.1: every nuisance parameter of these groups held at its best fit */
  holdGroups: z.array(z.string().min(1).max(64)).max(100).default([]),
  /** §9.2: every θ and γ held at its best fit; μ and the floating normalisations free */
  statOnly: z.boolean().default(false),
  /** §9.3: false leaves out the template-statistics parameters (γ ≡ 1) */
  templateStats: z.boolean().default(true),
  /** §9.4: systematics split by region or by process */
  decorrelate: z.array(decorrelationSchema).max(100).default([]),
  /**
   * §9.5: the Asimov dataset of the expected numbers: pre-fit (θ = 0, γ = 1, k at start), or the
   * best fit of the control regions alone with μ held at 0 (`control`), or of all regions with μ
   * held at 0 (`background`, only once unblinded)
   */
  expectedFrom: z.enum(['prefit', 'control', 'background']).default('prefit'),
  /** §9.6: all regions fitted to data with μ never revealed (allowed while blinded) */
  hiddenMu: z.boolean().default(false),
  /** §9.7: the uncertainty breakdown by freezing each group and rescanning μ */
  breakdown: z.boolean().default(false),
};

export const decorrelationReportSchema = z.strictObject({
  parameter: z.string(),
  by: z.enum(['region', 'process']),
  /** the parts as fitted: name (`<parameter>/<region or process>`), where, best fit and σ */
  parts: z.array(z.strictObject({ name: z.string(), where: z.string(), value: z.number(), error: z.number().nullable() })),
  /** the weighted average of the parts with their correlations (Lyons, Gibaut, Clifford 1988) and its χ² */
  average: z.number().nullable(),
  chi2: z.number().nullable(),
  dof: z.number().int(),
  p: z.number().nullable(),
});
export type DecorrelationReport = z.infer<typeof decorrelationReportSchema>;

export const breakdownRowSchema = z.strictObject({
  /** a group of systematics, or "template statistics", or "all systematics" */
  group: z.string(),
  /** √(σ±² − σ±(G held)²) from the q = 1 crossings; 0 and flagged where the difference is negative */
  up: z.number().nullable(),
  down: z.number().nullable(),
  flagged: z.boolean(),
  /** the Schur figure of the grouped impacts for the same group, beside it (docs/likelihood.md §6) */
  schur: z.number().nullable(),
});
export type BreakdownRow = z.infer<typeof breakdownRowSchema>;

/** What the result says of its variant. */
export const variantReportSchema = z.strictObject({
  held: z.array(z.strictObject({ parameter: z.string(), value: z.number(), asked: z.union([z.number(), z.literal('best')]) })),
  statOnly: z.boolean(),
  templateStats: z.boolean(),
  expectedFrom: z.enum(['prefit', 'control', 'background']),
  hiddenMu: z.boolean(),
  decorrelation: z.array(decorrelationReportSchema),
  breakdown: z.array(breakdownRowSchema).nullable(),
});
export type VariantReport = z.infer<typeof variantReportSchema>;
