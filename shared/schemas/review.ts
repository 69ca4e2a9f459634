import { z } from 'zod';
import { approvalChecklistSchema } from './approval';
import { BLINDING_STATES, QUESTION_STATES, REGION_ROLES } from '../vocabulary';
import { impactPairSchema, parameterScanSchema } from './fit';
import { fitSummarySchema } from './fits';

/**
 * Contracts of the convener's review loop: the diagnosis of one parameter in one fit, questions
 * on parameters, and the blinding log with its request and decision.
 */

// ---- diagnosis of one parameter in one fit (docs/likelihood.md §6)

/** One bin of a region: what constrains the parameter there, next to what the data can resolve. */
export const diagnosisBinSchema = z.object({
  /** 0-based bin index and its edges */
  bin: z.number().int(),
  low: z.number(),
  high: z.number(),
  /** (∂ν/∂θ)²/ν at the best fit, and its share of the parameter's whole information (0–1) */
  information: z.number(),
  share: z.number(),
  /** ν̂: the expected count at the best fit; precision = sqrt(ν̂), the data's statistical precision */
  expected: z.number(),
  precision: z.number(),
  /** Change of the expected count, in events, with this parameter at +1 and at −1 (all else at the best fit). */
  up: z.number(),
  down: z.number(),
  /** max(|up|, |down|) / precision */
  ratio: z.number(),
  /** The fitted count in this bin; null while blinding withholds it (signal region of a blinded analysis). */
  data: z.number().nullable(),
});
export type DiagnosisBin = z.infer<typeof diagnosisBinSchema>;

export const diagnosisRegionSchema = z.object({
  region: z.string(),
  label: z.string(),
  role: z.enum(REGION_ROLES),
  information: z.number(),
  /** share of the whole information (constraint included), 0–1 */
  share: z.number(),
  /** every bin of the region, in order */
  bins: z.array(diagnosisBinSchema),
});
export type DiagnosisRegion = z.infer<typeof diagnosisRegionSchema>;

/**
 * One sentence of the plain-language summary. `evidence` names the panel element that shows
 * the numbers it rests on: 'pull', 'width', 'bins', 'regions', 'scan' or 'correlations'.
 */
export const diagnosisClaimSchema = z.object({
  text: z.string(),
  evidence: z.enum(['pull', 'width', 'bins', 'regions', 'scan', 'correlations']),
});
export type DiagnosisClaim = z.infer<typeof diagnosisClaimSchema>;

export const diagnosisSchema = z.object({
  fit: fitSummarySchema,
  parameter: z.object({
    name: z.string(),
    label: z.string(),
    group: z.string().nullable(),
    /** the register entry of this parameter, when there is one */
    entry: z.object({ key: z.string(), owner: z.string().nullable() }).nullable(),
  }),
  /** θ̂ and σ̂; the prior is θ = 0 ± 1 */
  value: z.number(),
  error: z.number().nullable(),
  pull: z.number(),
  constraint: z.number().nullable(),
  overConstrained: z.boolean(),
  threshold: z.number(),
  postfitImpact: impactPairSchema.nullable(),
  prefitImpact: impactPairSchema.nullable(),
  quickImpact: z.number().nullable(),
  rank: z.number().int().nullable(),
  information: z.object({
    /** Σ over regions plus the constraint's 1 */
    total: z.number(),
    constraint: z.number(),
    /** 1/sqrt(total): the width with no correlations, to set beside σ̂ */
    width: z.number(),
    regions: z.array(diagnosisRegionSchema),
  }),
  /** 2ΔNLL against θ, other parameters refitted, with the q = 1 crossings */
  scan: parameterScanSchema,
  /** the strongest correlations of this parameter in this fit, |ρ| largest first (at most 8) */
  correlations: z.array(z.object({ name: z.string(), label: z.string(), rho: z.number() })),
  summary: z.array(diagnosisClaimSchema),
  /** Convergence warnings of the fit, shown beside every number of the panel. */
  warnings: z.array(z.string()),
  /** Checks run from this panel (its decorrelation by region, its strongest partner held), newest last. */
  checks: z.array(fitSummarySchema.extend({ variant: z.string().nullable() })),
});
export type Diagnosis = z.infer<typeof diagnosisSchema>;

/** POST …/fits/:fitId/diagnosis/:parameter/checks: what the convener asks to run. */
export const diagnosisChecksSchema = z.strictObject({ checks: z.array(z.enum(['decorrelate', 'partner'])).min(1).default(['decorrelate', 'partner']) });

// ---- questions on parameters

export const questionStateSchema = z.enum(QUESTION_STATES);
export type QuestionState = z.infer<typeof questionStateSchema>;

const person = z.object({ id: z.number(), name: z.string() }).nullable();

/** What an answer may attach as evidence: a fit, a variant (a fit whose options vary the nominal one), a parameter's diagnosis in a fit, a model version. */
export const evidenceSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('fit'), fitId: z.number().int().positive() }),
  z.strictObject({ kind: z.literal('variant'), fitId: z.number().int().positive() }),
  z.strictObject({ kind: z.literal('diagnosis'), fitId: z.number().int().positive(), parameter: z.string().min(1).max(128) }),
  z.strictObject({ kind: z.literal('version'), version: z.number().int().positive() }),
]);
export type Evidence = z.infer<typeof evidenceSchema>;

/** A piece of evidence as a thread shows it: what it is, in words, and its state where it has one. */
export const evidenceCardSchema = z.object({
  evidence: evidenceSchema,
  label: z.string(),
  /** A fit's state (a card of a fit, variant or diagnosis); null for a version. */
  state: z.string().nullable(),
  /** What the card says under its label: the fit's dataset and options, or the version's note. */
  detail: z.string(),
});
export type EvidenceCard = z.infer<typeof evidenceCardSchema>;

export const answerSchema = z.object({ id: z.number(), author: person, body: z.string(), createdAt: z.string(), evidence: z.array(evidenceCardSchema) });
export type Answer = z.infer<typeof answerSchema>;

export const QUESTION_SUBJECTS = ['parameter', 'region', 'bin', 'fit', 'version'] as const;
export type QuestionSubject = (typeof QUESTION_SUBJECTS)[number];

export const questionSummarySchema = z.object({
  id: z.number(),
  /** What it is about, and that in words (e.g. "region SR-core, bin 3"). */
  about: z.object({ kind: z.enum(QUESTION_SUBJECTS), label: z.string(), region: z.string().nullable(), bin: z.number().nullable(), version: z.number().nullable() }),
  /** The register entry of a question on a parameter; null for other subjects. */
  entry: z.object({ key: z.string(), label: z.string(), group: z.string().nullable(), owner: person }).nullable(),
  /** the fit the question is about or was raised on, if any */
  fit: z.object({ id: z.number(), label: z.string() }).nullable(),
  title: z.string(),
  state: questionStateSchema,
  author: person,
  answers: z.number(),
  createdAt: z.string(),
  /** the latest answer, resolution or reopening */
  lastActivity: z.string(),
  resolvedBy: person,
  resolvedAt: z.string().nullable(),
});
export type QuestionSummary = z.infer<typeof questionSummarySchema>;

export const questionDetailSchema = questionSummarySchema.extend({ body: z.string(), thread: z.array(answerSchema) });
export type QuestionDetail = z.infer<typeof questionDetailSchema>;

/** GET /api/analyses/:slug/questions?state=&owner=&group=&fit=&entry= (every filter optional) */
export const questionFilterSchema = z.strictObject({
  state: questionStateSchema.optional(),
  /** owner's user id */
  owner: z.coerce.number().int().positive().optional(),
  group: z.string().max(100).optional(),
  fit: z.coerce.number().int().positive().optional(),
  entry: z.string().max(100).optional(),
});
export type QuestionFilter = z.infer<typeof questionFilterSchema>;

/**
 * What a question is about, one of: `entry` (a parameter: the register entry's key), `region` (with
 * `bin` for one of its bins, 1-based), `version` (a model version's number), or `fitId` alone (the
 * fit itself). A fitId beside a parameter or region says in which fit it was seen.
 */
export const raiseQuestionSchema = z.strictObject({
  /** the register entry (= nuisance parameter name) */
  entry: z.string().min(1, 'Name the parameter the question is about.').max(100).nullable().default(null),
  region: z.string().min(1).max(64).nullable().default(null),
  bin: z.number().int().min(1, 'Bins are counted from 1.').nullable().default(null),
  version: z.number().int().positive().nullable().default(null),
  fitId: z.number().int().positive().nullable().default(null),
  title: z.string().trim().min(3, 'Give the question a title of at least 3 characters.').max(200, 'Keep the title under 200 characters.'),
  body: z.string().trim().min(1, 'Write the question.').max(20_000, 'Keep the question under 20 000 characters.'),
});
export type RaiseQuestion = z.input<typeof raiseQuestionSchema>;

export const answerQuestionSchema = z.strictObject({
  body: z.string().trim().min(1, 'Write an answer.').max(20_000, 'Keep the answer under 20 000 characters.'),
  evidence: z.array(evidenceSchema).max(10, 'Attach at most 10 pieces of evidence.').default([]),
});
export type AnswerQuestion = z.input<typeof answerQuestionSchema>;

/** POST …/questions/:id/resolve and …/reopen: an optional note, added to the thread */
export const questionStepSchema = z.strictObject({ note: z.string().trim().max(20_000).default('') });
export type QuestionStep = z.input<typeof questionStepSchema>;

// ---- blinding

export const blindingActionSchema = z.enum([
  'requested',
  /** one of two required approvals */
  'first_approval',
  'approved',
  'declined',
  'withdrawn',
  /** the number of approvals required changed */
  'settings',
  /** membership changes while the analysis is not unblinded */
  'member_added',
  'member_joined',
  'role_changed',
  'member_removed',
]);
export type BlindingAction = z.infer<typeof blindingActionSchema>;

export const blindingEventSchema = z.object({
  id: z.number(),
  action: blindingActionSchema,
  note: z.string(),
  by: z.string().nullable(),
  at: z.string(),
  /** On a request or a decision: the server's checklist as it stood then (null on other events and older ones). */
  checklist: approvalChecklistSchema.nullable(),
});
export type BlindingEvent = z.infer<typeof blindingEventSchema>;

/** GET /api/analyses/:slug/blinding */
export const blindingLogSchema = z.object({
  state: z.enum(BLINDING_STATES),
  /** conveners other than the requester who must approve (1 or 2) */
  approvalsRequired: z.number().int(),
  /** approvals given so far to the pending request */
  approvalsGiven: z.number().int(),
  events: z.array(blindingEventSchema),
});
export type BlindingLog = z.infer<typeof blindingLogSchema>;

/** POST …/blinding/request (analyst) */
export const unblindingRequestSchema = z.strictObject({
  note: z.string().trim().min(10, 'Say in at least 10 characters why the analysis is ready to unblind.').max(20_000),
});
export type UnblindingRequest = z.infer<typeof unblindingRequestSchema>;

/** POST …/blinding/decision (convener) */
export const unblindingDecisionSchema = z.strictObject({
  approve: z.boolean(),
  note: z.string().trim().max(20_000).default(''),
});
export type UnblindingDecision = z.input<typeof unblindingDecisionSchema>;

/** PUT …/blinding/settings (convener): how many conveners must approve unblinding. */
export const blindingSettingsSchema = z.strictObject({ approvals: z.union([z.literal(1), z.literal(2)]) });
export type BlindingSettings = z.infer<typeof blindingSettingsSchema>;
