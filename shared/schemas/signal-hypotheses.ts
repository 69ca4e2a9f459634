import { z } from 'zod';
import { exchangeHypothesisSchema, hypothesisEffectSchema, keySchema } from './exchange';

/**
 * Contracts of the live model's signal hypotheses (docs/exchange-file.md, "Signal hypotheses"):
 * the parameter they differ in, and each hypothesis with its templates (uploaded as CSV, the
 * templates file's columns) and its effects. The model's rules are the exchange file's.
 */

const text = (max: number) => z.string().max(max, `must be at most ${max} characters`);

export const hypothesisParameterSchema = z.strictObject({
  name: z.string().trim().min(1, 'is required (e.g. mass)').max(100, 'must be at most 100 characters'),
  unit: text(30).trim().default(''),
});
export type HypothesisParameterInput = z.input<typeof hypothesisParameterSchema>;

/**
 * The form fields that come with a hypothesis's CSV file (multipart, so every field is text):
 * `effects`, when given, is a JSON list of the exchange file's hypothesis effects.
 */
export const hypothesisFieldsSchema = z.strictObject({
  key: keySchema,
  label: text(200).trim().default(''),
  value: z
    .string({ error: 'is required: the value of the hypothesis parameter, e.g. 1250' })
    .trim()
    .regex(/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/, 'must be a number, e.g. 1250')
    .transform(Number)
    .refine(Number.isFinite, 'must be a finite number'),
  effects: z.string().optional(),
});
export type HypothesisFields = z.input<typeof hypothesisFieldsSchema>;

/** The `effects` field once read as JSON. */
export const hypothesisEffectsSchema = z.array(hypothesisEffectSchema);

/** A hypothesis as the model screen lists it: what it replaces, its yields and how many effects it gives. */
export const hypothesisSummarySchema = z.object({
  key: z.string(),
  label: z.string(),
  value: z.number(),
  /** the (region, process) templates it replaces, with its bins and total yield in events */
  templates: z.array(z.object({ region: z.string(), process: z.string(), bins: z.number(), total: z.number() })),
  /** its signal yield summed over every template it gives, in events (at μ = 1) */
  total: z.number(),
  effects: z.object({ scale: z.number(), shape: z.number() }),
});
export type HypothesisSummary = z.infer<typeof hypothesisSummarySchema>;

export const signalHypothesesSchema = z.object({
  parameter: z.object({ name: z.string(), unit: z.string() }).nullable(),
  /** in the order of their value */
  points: z.array(hypothesisSummarySchema),
  /**
   * Where the hypotheses no longer fit the model (a shape effect added to a template they replace
   * since they were saved): a model version cannot be frozen until they are replaced or removed.
   */
  issues: z.array(z.object({ hypothesis: z.string().nullable(), message: z.string() })),
});
export type SignalHypotheses = z.infer<typeof signalHypothesesSchema>;

export const hypothesisUploadResultSchema = z.object({
  saved: z.boolean(),
  /** a hypothesis of the same key is (or would be) replaced */
  replaced: z.boolean(),
  hypothesis: hypothesisSummarySchema,
});
export type HypothesisUploadResult = z.infer<typeof hypothesisUploadResultSchema>;

/** One hypothesis whole, as the exchange file writes it. */
export const signalHypothesisSchema = exchangeHypothesisSchema;
export type SignalHypothesis = z.infer<typeof signalHypothesisSchema>;
