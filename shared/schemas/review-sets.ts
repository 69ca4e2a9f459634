import { z } from 'zod';
import { fitSummarySchema } from './fits';
import { breakdownRowSchema, decorrelationReportSchema } from './variants';

/** POST /api/analyses/:slug/review-sets: the standard set of linked fits of a model version. */
export const startReviewSetSchema = z.strictObject({
  version: z.number().int().positive(),
  label: z.string().trim().max(200).default(''),
});
export type StartReviewSet = z.input<typeof startReviewSetSchema>;

/** A member of a set: a fit with its part in the set and that part in words. */
export const reviewMemberSchema = fitSummarySchema.extend({ variant: z.string(), title: z.string() });
export type ReviewMember = z.infer<typeof reviewMemberSchema>;

export const reviewSetSummarySchema = z.object({
  id: z.number(),
  label: z.string(),
  version: z.number(),
  blinded: z.boolean(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
  /** queued or running while any member is; then succeeded, or failed when any member did not succeed */
  state: z.enum(['running', 'succeeded', 'failed']),
  /** 0…1 over the whole set */
  progress: z.number(),
  members: z.array(reviewMemberSchema),
});
export type ReviewSetSummary = z.infer<typeof reviewSetSummarySchema>;

const cell = z.object({ pull: z.number(), constraint: z.number().nullable(), fixed: z.boolean() }).nullable();

/**
 * The set side by side: a row per member with μ̂, σ, Z and the limit where its blinding allows
 * them; the pulls and constraints of every nuisance parameter across the members, with the
 * parameters whose pull or constraint moves between members marked; the decorrelation tests and
 * the breakdowns of the members that have them.
 */
export const reviewComparisonSchema = z.object({
  rows: z.array(
    z.object({
      variant: z.string(),
      title: z.string(),
      fitId: z.number(),
      state: z.string(),
      /** whether its result converged; null while it has none (queued, running, cancelled, withheld) */
      status: z.enum(['converged', 'failed']).nullable(),
      /** why a member shows no numbers (hidden μ, withheld while blinded, not finished, failed) */
      note: z.string().nullable(),
      mu: z.object({ value: z.number(), error: z.number().nullable(), low: z.number().nullable(), high: z.number().nullable(), fixed: z.boolean() }).nullable(),
      z: z.number().nullable(),
      limit: z.object({ observed: z.number().nullable(), expected: z.number().nullable() }).nullable(),
      /** the basis of its expected numbers */
      expectedFrom: z.enum(['prefit', 'control', 'background']).nullable(),
      warnings: z.number(),
    }),
  ),
  variants: z.array(z.string()),
  parameters: z.array(
    z.object({
      name: z.string(),
      group: z.string().nullable(),
      /** one per entry of `variants` */
      cells: z.array(cell),
      /** largest minus smallest pull, and constraint, over the members that fit it */
      pullSpread: z.number(),
      constraintSpread: z.number(),
      /** the pull moves by more than 0.5, or the constraint by more than 0.2, between members */
      moves: z.boolean(),
    }),
  ),
  decorrelation: z.array(z.object({ variant: z.string(), fitId: z.number(), reports: z.array(decorrelationReportSchema) })),
  breakdown: z.array(z.object({ variant: z.string(), fitId: z.number(), rows: z.array(breakdownRowSchema) })),
});
export type ReviewComparison = z.infer<typeof reviewComparisonSchema>;

export const reviewSetDetailSchema = reviewSetSummarySchema.extend({ comparison: reviewComparisonSchema });
export type ReviewSetDetail = z.infer<typeof reviewSetDetailSchema>;

/** The thresholds of "moves between members" (common practice, no source). */
export const MOVES = { pull: 0.5, constraint: 0.2 } as const;
