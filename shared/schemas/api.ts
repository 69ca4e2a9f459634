import { z } from 'zod';
import { BLINDING_STATES, EFFECT_KINDS, ENTRY_STATES, PROCESS_KINDS, REGION_ROLES } from '../vocabulary';
import { MEMBER_ROLES, ACTIONS } from '../permissions';

/** Request and response contracts of the HTTP API (server parses with them, client types with them). */

export const memberRoleSchema = z.enum(MEMBER_ROLES);
export const actionSchema = z.enum(ACTIONS);
export const blindingSchema = z.enum(BLINDING_STATES);
export const entryStateSchema = z.enum(ENTRY_STATES);
export type EntryState = z.infer<typeof entryStateSchema>;
export type Blinding = z.infer<typeof blindingSchema>;

const email = z.email({ error: 'must be an e-mail address' }).max(254).transform((s) => s.toLowerCase());
const slug = z
  .string()
  .min(2, 'must be at least 2 characters')
  .max(64, 'must be at most 64 characters')
  .regex(/^[a-z0-9]+(-[a-z0-9]+)*$/, 'must be lower-case letters and digits separated by single "-"');

// ---- errors
export const apiErrorSchema = z.object({
  error: z.object({
    message: z.string(),
    /** machine-readable reason where the client reacts to it (e.g. 'csrf' → fetch a new token and retry) */
    code: z.string().optional(),
    /** zod issues: the path of the failing field and what is wrong */
    issues: z.array(z.object({ path: z.array(z.union([z.string(), z.number()])), message: z.string() })).optional(),
  }),
});
export type ApiError = z.infer<typeof apiErrorSchema>;

// ---- auth
export const signInSchema = z.strictObject({ email, password: z.string().min(1, 'is required').max(200) });
export type SignIn = z.infer<typeof signInSchema>;

export const userSchema = z.object({ id: z.number(), email: z.string(), name: z.string(), isAdmin: z.boolean() });
export type User = z.infer<typeof userSchema>;

export const meSchema = z.object({
  user: userSchema,
  memberships: z.array(z.object({ slug: z.string(), name: z.string(), role: memberRoleSchema })),
});
export type Me = z.infer<typeof meSchema>;

// ---- accounts (admin)
export const createUserSchema = z.strictObject({
  email,
  name: z.string().trim().min(1, 'is required').max(120),
  password: z.string().min(10, 'must be at least 10 characters').max(200),
  isAdmin: z.boolean().default(false),
});
export type CreateUser = z.input<typeof createUserSchema>;

// ---- analyses
export const analysisSummarySchema = z.object({
  slug: z.string(),
  name: z.string(),
  description: z.string(),
  blinding: blindingSchema,
  /** the caller's role; null for an admin who is not a member */
  role: memberRoleSchema.nullable(),
  entries: z.number(),
  members: z.number(),
});
export type AnalysisSummary = z.infer<typeof analysisSummarySchema>;

export const createAnalysisSchema = z.strictObject({
  slug,
  name: z.string().trim().min(1, 'is required').max(200),
  description: z.string().max(5000).default(''),
  blinded: z.boolean().default(true),
});
export type CreateAnalysis = z.input<typeof createAnalysisSchema>;

/**
 * The labels every chart of an analysis carries, on screen and in the approval pack: the
 * experiment, a status ("Internal", "Preliminary"), the integrated luminosity and the
 * centre-of-mass energy, each a short text as it should read (e.g. "38 fb⁻¹", "9 TeV").
 */
const plotLabelText = (max: number) =>
  z
    .string()
    .trim()
    .max(max, `must be at most ${max} characters`)
    .regex(/^[^\p{Cc}<>]*$/u, 'must be plain text on one line, without < or >');
export const plotLabelsSchema = z.strictObject({
  experiment: plotLabelText(40),
  status: plotLabelText(40),
  luminosity: plotLabelText(40),
  energy: plotLabelText(40),
});
export type PlotLabels = z.infer<typeof plotLabelsSchema>;

export const analysisOverviewSchema = z.object({
  analysis: z.object({
    slug: z.string(),
    name: z.string(),
    description: z.string(),
    blinding: blindingSchema,
    signalStrength: z.object({ start: z.number(), min: z.number(), max: z.number() }),
    overConstraintThreshold: z.number(),
    createdAt: z.string(),
    /** what every chart of the analysis carries (PUT …/plot-labels, conveners) */
    plotLabels: plotLabelsSchema,
  }),
  role: memberRoleSchema.nullable(),
  /** what the caller may do here (from shared/permissions.ts) */
  permissions: z.array(actionSchema),
  counts: z.object({
    regions: z.number(),
    processes: z.number(),
    members: z.number(),
    entries: z.number(),
    entriesByState: z.record(entryStateSchema, z.number()),
  }),
  modelVersion: z.object({ number: z.number(), createdAt: z.string(), note: z.string() }).nullable(),
  latestFit: z.object({ id: z.number(), state: z.string(), label: z.string(), createdAt: z.string() }).nullable(),
  openQuestions: z.number(),
});
export type AnalysisOverview = z.infer<typeof analysisOverviewSchema>;

// ---- members
export const memberSchema = z.object({
  userId: z.number(),
  email: z.string(),
  name: z.string(),
  role: memberRoleSchema,
  since: z.string(),
});
export type Member = z.infer<typeof memberSchema>;

export const addMemberSchema = z.strictObject({ email, role: memberRoleSchema });
export type AddMember = z.infer<typeof addMemberSchema>;
export const updateMemberSchema = z.strictObject({ role: memberRoleSchema });
export type UpdateMember = z.infer<typeof updateMemberSchema>;

// ---- model (read)
export const regionSchema = z.object({
  key: z.string(),
  label: z.string(),
  role: z.enum(REGION_ROLES),
  observable: z.string(),
  unit: z.string(),
  edges: z.array(z.number()),
  /** null when not recorded, or withheld because the analysis is blinded and this is a signal region */
  observed: z.array(z.number()).nullable(),
  withheld: z.boolean(),
});
export type Region = z.infer<typeof regionSchema>;

export const processSchema = z.object({
  key: z.string(),
  label: z.string(),
  kind: z.enum(PROCESS_KINDS),
  colour: z.string().nullable(),
});
export type Process = z.infer<typeof processSchema>;

export const templateSchema = z.object({
  region: z.string(),
  process: z.string(),
  nominal: z.array(z.number()),
  variance: z.array(z.number()).nullable(),
  floatingNorm: z.string().nullable(),
});

export const modelSchema = z.object({
  regions: z.array(regionSchema),
  processes: z.array(processSchema),
  floatingNorms: z.array(z.object({ key: z.string(), label: z.string(), start: z.number(), min: z.number(), max: z.number() })),
  /** Signal strengths besides μ, each multiplying its own templates (μ multiplies the other signal templates). */
  parametersOfInterest: z.array(
    z.object({ key: z.string(), label: z.string(), start: z.number(), min: z.number(), max: z.number(), targets: z.array(z.object({ region: z.string(), process: z.string() })) }),
  ),
  templates: z.array(templateSchema),
});
export type Model = z.infer<typeof modelSchema>;

// ---- register (read)
export const entrySummarySchema = z.object({
  key: z.string(),
  label: z.string(),
  group: z.string().nullable(),
  owner: z.object({ id: z.number(), name: z.string(), email: z.string() }).nullable(),
  state: entryStateSchema,
  processes: z.array(z.string()),
  regions: z.array(z.string()),
  kinds: z.array(z.enum(EFFECT_KINDS)),
  /** largest |variation| over nominal in any bin, in percent */
  largestEffectPct: z.number().nullable(),
  warnings: z.number(),
  /** questions on this entry not yet resolved (open or answered) */
  openQuestions: z.number(),
  /** its effects the analysis's pruning rules propose and not pruned, and its effects pruned */
  pruning: z.object({ candidates: z.number(), pruned: z.number() }).default({ candidates: 0, pruned: 0 }),
  updatedAt: z.string(),
});
export type EntrySummary = z.infer<typeof entrySummarySchema>;
