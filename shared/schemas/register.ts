import { z } from 'zod';
import { EFFECT_KINDS, PROCESS_KINDS } from '../vocabulary';
import { memberRoleSchema, entryStateSchema } from './api';
import { keySchema, LIMITS, ratioNumber, regionRoleSchema, varianceNumber, yieldNumber } from './exchange';

/** Contracts of the register, the model editor, variation uploads, groups, invitations and the outbox. */

const finite = z.number({ error: 'must be a finite number' });
const parameter = finite.min(-LIMITS.parameter, 'must be at least -1e6').max(LIMITS.parameter, 'must be at most 1e6');
const text = (max: number) => z.string().max(max, `must be at most ${max} characters`);

// ---- model editing (analysts)
const regionFields = {
  key: keySchema,
  label: text(200),
  role: regionRoleSchema,
  observable: z.string().trim().min(1, 'is required').max(100),
  unit: text(30),
  edges: z.array(finite).min(2, 'needs at least two edges (one bin)').max(2001),
};
export const regionInputSchema = z.strictObject({ ...regionFields, label: regionFields.label.default(''), unit: regionFields.unit.default('') });
export type RegionInput = z.input<typeof regionInputSchema>;
/** Patches carry no defaults: a field left out keeps its value. */
export const regionPatchSchema = z.strictObject(regionFields).omit({ key: true }).partial();
export type RegionPatch = z.infer<typeof regionPatchSchema>;

export const observedInputSchema = z.strictObject({ observed: z.array(yieldNumber).nullable() });

const processFields = {
  key: keySchema,
  label: text(200),
  kind: z.enum(PROCESS_KINDS),
  colour: z.string().regex(/^#[0-9a-fA-F]{6}$/, 'must be a colour like #2e6f95').nullable(),
};
export const processInputSchema = z.strictObject({ ...processFields, label: processFields.label.default(''), colour: processFields.colour.default(null) });
export type ProcessInput = z.input<typeof processInputSchema>;
export const processPatchSchema = z.strictObject(processFields).omit({ key: true }).partial();

export const floatingNormInputSchema = z.strictObject({
  key: keySchema,
  label: text(200).default(''),
  start: parameter.default(1),
  min: parameter.default(0),
  max: parameter.default(10),
});
export type FloatingNormInput = z.input<typeof floatingNormInputSchema>;

export const templateInputSchema = z.strictObject({
  nominal: z.array(yieldNumber),
  variance: z.array(varianceNumber).nullable().default(null),
  floatingNorm: keySchema.nullable().default(null),
});
export type TemplateInput = z.input<typeof templateInputSchema>;

/** CSV uploads of the model: which table the file fills. Columns in docs/uploads.md. */
export const modelCsvKindSchema = z.enum(['templates', 'observed']);
export type ModelCsvKind = z.infer<typeof modelCsvKindSchema>;

export const modelUploadResultSchema = z.object({
  saved: z.boolean(),
  kind: modelCsvKindSchema,
  /** what the file sets: one line per (region, process) or region */
  changes: z.array(z.object({ region: z.string(), process: z.string().nullable(), bins: z.number(), /** null for a blinded signal region */ total: z.number().nullable() })),
});
export type ModelUploadResult = z.infer<typeof modelUploadResultSchema>;

// ---- register entries
const entryFields = {
  key: keySchema,
  label: z.string().trim().min(1, 'is required').max(200),
  /** a group name; a name no group has yet creates that group (analysts only) */
  group: z.string().trim().max(64).nullable(),
  ownerId: z.number().int().positive().nullable(),
  description: text(10_000),
  justification: text(10_000),
  references: z.array(z.string().trim().min(1).max(500)).max(50),
};
export const entryInputSchema = z.strictObject({
  ...entryFields,
  group: entryFields.group.default(null),
  ownerId: entryFields.ownerId.default(null),
  description: entryFields.description.default(''),
  justification: entryFields.justification.default(''),
  references: entryFields.references.default([]),
});
export type EntryInput = z.input<typeof entryInputSchema>;

export const entryPatchSchema = z
  .strictObject(entryFields)
  .omit({ key: true })
  .partial()
  .extend({
    /** the version the editor started from; a newer one on the server means someone else changed the entry */
    version: z.number().int().positive(),
  });
export type EntryPatch = z.input<typeof entryPatchSchema>;

/** Review steps: submit (owner or analyst), accept / send back (convener), retire / reopen. */
export const reviewActionSchema = z.strictObject({
  action: z.enum(['submit', 'accept', 'send_back', 'retire', 'reopen']),
  comment: text(5000).default(''),
});
export type ReviewAction = z.input<typeof reviewActionSchema>;

export const variationWarningSchema = z.object({ code: z.string(), message: z.string(), bins: z.array(z.number()).optional() });
export type VariationWarningView = z.infer<typeof variationWarningSchema>;

const chiSquareSchema = z.object({ chi2: z.number(), dof: z.number(), p: z.number() });
/** The error of a shift per bin and its χ² against zero and against a flat shift (server/variations/precision.ts). */
export const shiftPrecisionSchema = z.object({
  /** σ of the shift per bin; null where no error can be given */
  errors: z.array(z.number().nullable()),
  /** given in the file, estimated from the template variance (×2), or none */
  source: z.enum(['given', 'estimated', 'none']),
  againstZero: chiSquareSchema.nullable(),
  againstFlat: chiSquareSchema.extend({ relativeShift: z.number() }).nullable(),
});
export type ShiftPrecisionView = z.infer<typeof shiftPrecisionSchema>;

/** A variation as the screens draw it: with the nominal and binning it is relative to. */
const effectShownSchema = z.object({
  region: z.string(),
  process: z.string(),
  kind: z.enum(EFFECT_KINDS),
  up: z.union([z.number(), z.array(z.number())]),
  down: z.union([z.number(), z.array(z.number())]),
  /** the template the variation is relative to, for the per-bin preview */
  nominal: z.array(z.number()),
  edges: z.array(z.number()),
  warnings: z.array(variationWarningSchema),
  /** shape effects: each shift's statistical precision */
  precision: z.object({ up: shiftPrecisionSchema, down: shiftPrecisionSchema }).nullable(),
  /** how it was smoothed, if it was (the variation as uploaded is kept) */
  smoothing: z.object({ method: z.string(), params: z.record(z.string(), z.number()), by: z.string(), at: z.string() }).nullable().optional(),
});

export const effectViewSchema = effectShownSchema.extend({
  id: z.number(),
  /** pruned: left out of frozen versions, or kept as its normalisation only */
  pruned: z.enum(['dropped', 'normalisation']).nullable().default(null),
  upload: z.object({ id: z.number(), filename: z.string(), sha256: z.string(), createdAt: z.string() }).nullable(),
  /** A shape whose nominal changed since it was uploaded: since when, and the nominal it was made against (the current one is `nominal`). */
  stale: z.object({ since: z.string(), nominalAtUpload: z.array(z.number()) }).nullable(),
});
export type EffectView = z.infer<typeof effectViewSchema>;

/**
 * POST …/entries/:key/effects/:effectId/smooth: smooth a shape effect's relative shift in its
 * region, previewed (save false) or saved; `restore` brings back the variation as uploaded.
 * Running medians need at least three filled bins; the local regression's window is a number of
 * bins, at least 3 and at most the filled bins of the region.
 */
export const smoothRequestSchema = z.discriminatedUnion('method', [
  z.strictObject({ method: z.literal('median-hanning'), save: z.boolean().default(false) }),
  z.strictObject({ method: z.literal('local-regression'), window: z.number().int().min(3).max(1000), iterations: z.number().int().min(0).max(10).default(2), save: z.boolean().default(false) }),
  z.strictObject({ method: z.literal('restore'), save: z.boolean().default(false) }),
]);
export type SmoothRequest = z.input<typeof smoothRequestSchema>;

export const smoothPreviewSchema = z.object({
  saved: z.boolean(),
  method: z.string(),
  nominal: z.array(z.number()),
  edges: z.array(z.number()),
  before: z.object({ up: z.array(z.number()), down: z.array(z.number()) }),
  after: z.object({ up: z.array(z.number()), down: z.array(z.number()) }),
  warnings: z.array(variationWarningSchema),
  /** the smoothed shifts' precision: their errors and χ² tests, as for an upload */
  precision: z.object({ up: shiftPrecisionSchema, down: shiftPrecisionSchema }).nullable().default(null),
});
export type SmoothPreview = z.infer<typeof smoothPreviewSchema>;

export const revisionSchema = z.object({
  id: z.number(),
  action: z.string(),
  summary: z.string(),
  author: z.object({ id: z.number(), name: z.string() }).nullable(),
  createdAt: z.string(),
  before: z.unknown().optional(),
  after: z.unknown().optional(),
});
export type Revision = z.infer<typeof revisionSchema>;

const change = z.object({ before: z.number().nullable(), after: z.number().nullable() });
/**
 * What the entry's latest upload does to the analysis's latest converged fit (services/impact-checks):
 * μ̂ and σ_μ before and after, the entry's post-fit impact and rank, and every parameter whose pull
 * or constraint moved by more than 0.1. Numbers the reference fit may not show (μ hidden) are null.
 */
export const impactCheckSchema = z.object({
  /** withheld: the fit it was compared with read a region blinded since */
  state: z.enum(['running', 'done', 'failed', 'withheld']),
  fit: z.object({ id: z.number(), label: z.string() }).nullable(),
  createdAt: z.string(),
  failure: z.string().nullable(),
  mu: change.extend({ fixed: z.boolean() }).nullable(),
  muError: change.nullable(),
  focus: z.array(z.object({ name: z.string(), pull: change, constraint: change, impact: z.object({ up: z.number().nullable(), down: z.number().nullable() }).nullable(), rankBefore: z.number().nullable(), rankAfter: z.number().nullable() })),
  moved: z.array(z.object({ name: z.string(), pull: change, constraint: change })),
  /** the refit's warnings (clip edge, a parameter at a bound, an impact left empty), shown beside its numbers */
  warnings: z.array(z.string()),
  seconds: z.number().nullable(),
});
export type ImpactCheck = z.infer<typeof impactCheckSchema>;

export const entryDetailSchema = z.object({
  key: z.string(),
  label: z.string(),
  group: z.string().nullable(),
  owner: z.object({ id: z.number(), name: z.string(), email: z.string() }).nullable(),
  description: z.string(),
  justification: z.string(),
  references: z.array(z.string()),
  state: entryStateSchema,
  version: z.number(),
  createdAt: z.string(),
  updatedAt: z.string(),
  effects: z.array(effectViewSchema),
  revisions: z.array(revisionSchema),
  /** what its latest upload does to the analysis's latest fit; null when none was checked */
  impactCheck: impactCheckSchema.nullable().default(null),
  /** what the caller may do with this entry (edit, upload, submit, accept, sendBack, retire, reopen) */
  can: z.object({
    edit: z.boolean(),
    upload: z.boolean(),
    submit: z.boolean(),
    accept: z.boolean(),
    sendBack: z.boolean(),
    retire: z.boolean(),
    reopen: z.boolean(),
    reassign: z.boolean(),
  }),
});
export type EntryDetail = z.infer<typeof entryDetailSchema>;

// ---- variation uploads
export const variationOptionsSchema = z.strictObject({
  /** one-sided variations (no down given): take down as the mirror image of up */
  mirror: z.boolean().default(false),
  /** two-sided variations: replace up/down by their symmetric average (nominal ± half the difference) */
  symmetrise: z.boolean().default(false),
  /** shape effects whose ratio to nominal is flat: store them as scale effects */
  flatToScale: z.boolean().default(false),
});
export type VariationOptions = z.input<typeof variationOptionsSchema>;

export const variationPreviewSchema = z.object({
  saved: z.boolean(),
  filename: z.string(),
  sha256: z.string(),
  effects: z.array(
    effectShownSchema.extend({
      /** what the options changed ("mirrored", "symmetrised", "converted to a scale effect") */
      transformed: z.array(z.string()),
      /** an existing effect of the same kind on this template is replaced */
      replaces: z.boolean(),
    }),
  ),
});
export type VariationPreview = z.infer<typeof variationPreviewSchema>;

/** The JSON form of a variation upload: the exchange file's effect objects. */
export const variationJsonSchema = z.strictObject({
  effects: z
    .array(
      z.discriminatedUnion('kind', [
        z.strictObject({ region: keySchema, process: keySchema, kind: z.literal('scale'), up: ratioNumber, down: ratioNumber.optional() }),
        z.strictObject({
          region: keySchema,
          process: keySchema,
          kind: z.literal('shape'),
          up: z.array(yieldNumber),
          down: z.array(yieldNumber).optional(),
          /** per bin, the variance of the shift (for the same events reweighted, Σ(w_varied − w_nominal)²) */
          up_shift_variance: z.array(varianceNumber).optional(),
          down_shift_variance: z.array(varianceNumber).optional(),
        }),
      ]),
    )
    .min(1, 'needs at least one effect'),
});

// ---- groups
export const groupSchema = z.object({ id: z.number(), name: z.string(), position: z.number(), entries: z.array(z.string()) });
export type Group = z.infer<typeof groupSchema>;
export const groupsViewSchema = z.object({ groups: z.array(groupSchema), ungrouped: z.array(z.string()) });
export type GroupsView = z.infer<typeof groupsViewSchema>;
export const groupInputSchema = z.strictObject({ name: z.string().trim().min(1, 'is required').max(64) });
export const moveEntrySchema = z.strictObject({ groupId: z.number().int().positive().nullable() });

// ---- invitations
export const invitationInputSchema = z.strictObject({
  email: z.email({ error: 'must be an e-mail address' }).max(254).transform((s) => s.toLowerCase()),
  role: memberRoleSchema,
});
export const invitationViewSchema = z.object({ analysis: z.string(), analysisSlug: z.string(), email: z.string(), role: memberRoleSchema, invitedBy: z.string() });
export type InvitationView = z.infer<typeof invitationViewSchema>;
export const acceptInvitationSchema = z.strictObject({
  name: z.string().trim().min(1, 'is required').max(120),
  password: z.string().min(10, 'must be at least 10 characters').max(200),
});

// ---- outbox
export const outboxMessageSchema = z.object({
  id: z.number(),
  to: z.string(),
  subject: z.string(),
  body: z.string(),
  delivered: z.boolean(),
  error: z.string().nullable(),
  createdAt: z.string(),
  analysis: z.string().nullable(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;

// ---- replica sets: one systematic from N alternative templates

/** The options of a replica-set upload (form field "options", JSON). */
export const replicaOptionsSchema = z.strictObject({
  /** envelope of the alternatives (default); nominal ± their standard deviation; or their principal components */
  method: z.enum(['envelope', 'spread', 'components']).default('envelope'),
  /** components: keep the leading ones until they hold this fraction of the variance */
  keep: z.number().gt(0).max(1).default(0.95),
});
export type ReplicaOptions = z.input<typeof replicaOptionsSchema>;

export const replicaPreviewSchema = z.object({
  saved: z.boolean(),
  filename: z.string(),
  sha256: z.string(),
  method: z.enum(['envelope', 'spread', 'components']),
  region: z.string(),
  process: z.string(),
  templates: z.array(z.string()),
  nominal: z.array(z.number()),
  edges: z.array(z.number()),
  /** the effects written: on this entry, and for components 2…k on entries of their own */
  effects: z.array(
    z.object({
      entry: z.string(),
      created: z.boolean(),
      up: z.array(z.number()),
      down: z.array(z.number()),
      /** components: the share of the replicas' variance */
      fraction: z.number().nullable(),
      warnings: z.array(variationWarningSchema),
    }),
  ),
  /** components: the share of the variance the kept components hold */
  kept: z.number().nullable(),
});
export type ReplicaPreview = z.infer<typeof replicaPreviewSchema>;

// ---- pruning (server/variations/pruning.ts)
/** PUT …/pruning/rules: an effect below belowPct percent in every bin, or a shape flat within its noise at p above shapeP. */
export const pruningRulesSchema = z.strictObject({
  belowPct: z.number({ error: 'must be a number (percent)' }).min(0, 'must not be negative').max(100, 'must be at most 100 (percent)'),
  shapeP: z.number({ error: 'must be a number (a p-value)' }).gt(0, 'must be above 0').lt(1, 'must be below 1'),
});
export type PruningRules = z.infer<typeof pruningRulesSchema>;

export const pruningReasonSchema = z.discriminatedUnion('rule', [
  z.object({ rule: z.literal('small'), largestPct: z.number() }),
  /** estimated: the shifts' errors were estimated from the template variance (conservative), not given with the upload */
  z.object({ rule: z.literal('flat-shape'), p: z.number(), estimated: z.boolean(), normalisation: z.object({ up: z.number(), down: z.number() }) }),
]);
export type PruningReason = z.infer<typeof pruningReasonSchema>;

/** dropped: left out of the fit; normalisation: a shape kept as its overall ratio only */
export const prunedAsSchema = z.enum(['dropped', 'normalisation']);
export type PrunedAs = z.infer<typeof prunedAsSchema>;

export const pruningItemSchema = z.object({
  effectId: z.number(),
  entry: z.object({ key: z.string(), label: z.string(), state: entryStateSchema }),
  region: z.string(),
  process: z.string(),
  kind: z.enum(EFFECT_KINDS),
  largestPct: z.number(),
  flatP: z.number().nullable(),
  /** why the rules propose it; null for an effect pruned although the rules do not propose it (any more) */
  reason: pruningReasonSchema.nullable(),
  /** a shape's overall ratio Σν±/Σν⁰ (what pruning to its normalisation keeps); null for a scale effect or one without a valid ratio */
  normalisation: z.object({ up: z.number(), down: z.number() }).nullable().default(null),
  pruned: prunedAsSchema.nullable(),
});
export type PruningItem = z.infer<typeof pruningItemSchema>;

export const pruningOverviewSchema = z.object({
  rules: pruningRulesSchema,
  /** effects the rules propose that are not pruned */
  candidates: z.array(pruningItemSchema),
  pruned: z.array(pruningItemSchema),
  /** effects in the fit, for scale */
  effects: z.number(),
  /** the fit a preview compares with, or null when no converged fit may be shown */
  reference: z.object({ id: z.number(), label: z.string(), version: z.number() }).nullable(),
});
export type PruningOverview = z.infer<typeof pruningOverviewSchema>;

/** POST …/pruning/previews and POST …/pruning: the effects, each dropped or kept as its normalisation (default: as its rule says). */
export const pruningSelectionSchema = z.strictObject({
  effects: z
    .array(z.strictObject({ id: z.number().int().positive(), as: prunedAsSchema.optional() }))
    .min(1, 'choose at least one effect')
    .max(20_000, 'at most 20000 effects at once'),
  comment: text(2000).default(''),
});
export type PruningSelection = z.input<typeof pruningSelectionSchema>;

/** POST …/pruning/restore: pruned effects back into the fit. */
export const pruningRestoreSchema = z.strictObject({
  effects: z.array(z.number().int().positive()).min(1, 'choose at least one effect').max(20_000, 'at most 20000 effects at once'),
  comment: text(2000).default(''),
});

/** What pruning a selection does to the latest shown fit's μ̂ and σ_μ and to every pull and constraint. */
export const pruningPreviewSchema = z.object({
  id: z.number(),
  state: z.enum(['running', 'done', 'failed', 'withheld']),
  fit: z.object({ id: z.number(), label: z.string() }).nullable(),
  createdAt: z.string(),
  failure: z.string().nullable(),
  selection: z.array(z.object({ effectId: z.number(), entry: z.string(), region: z.string(), process: z.string(), kind: z.enum(EFFECT_KINDS), as: prunedAsSchema })),
  /** selected effects the compared fit's version does not hold (written since it was frozen): pruning them changes nothing there */
  absent: z.array(z.number()),
  mu: change.extend({ fixed: z.boolean() }).nullable(),
  muError: change.nullable(),
  moved: z.array(z.object({ name: z.string(), pull: change, constraint: change })),
  /** the refit's warnings, shown beside its numbers */
  warnings: z.array(z.string()),
  seconds: z.number().nullable(),
});
export type PruningPreview = z.infer<typeof pruningPreviewSchema>;
