
import { sql } from 'drizzle-orm';
import {
  boolean,
  customType,
  doublePrecision,
  index,
  integer,
  json,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  serial,
  type AnyPgColumn,
  text,
  timestamp,
  uniqueIndex,
  varchar,
} from 'drizzle-orm/pg-core';
import { BLINDING_STATES, EFFECT_KINDS, ENTRY_STATES, FIT_STATES, MEMBER_ROLES, PROCESS_KINDS, QUESTION_STATES, REGION_ROLES } from '../../shared/vocabulary';

/**
 * The single source of truth for the data model. Migrations in drizzle/ are generated from
 * this file (`npm run db:generate`); insert and patch schemas derive from it.
 */

/** Bytes (v8-serialised engine inputs and outputs): Buffer in, Buffer out, on both drivers. */
const bytea = customType<{ data: Buffer; driverData: Buffer | Uint8Array }>({
  dataType: () => 'bytea',
  fromDriver: (value) => (Buffer.isBuffer(value) ? value : Buffer.from(value)),
});

const createdAt = () => timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow();

export const memberRole = pgEnum('member_role', MEMBER_ROLES);
export const regionRole = pgEnum('region_role', REGION_ROLES);
export const processKind = pgEnum('process_kind', PROCESS_KINDS);
export const effectKind = pgEnum('effect_kind', EFFECT_KINDS);
export const entryState = pgEnum('entry_state', ENTRY_STATES);
export const blindingState = pgEnum('blinding_state', BLINDING_STATES);
export const fitState = pgEnum('fit_state', FIT_STATES);
export const questionState = pgEnum('question_state', QUESTION_STATES);

export const users = pgTable('users', {
  id: serial('id').primaryKey(),
  email: varchar('email', { length: 254 }).notNull().unique(),
  name: varchar('name', { length: 120 }).notNull(),
  /** scrypt: "scrypt$N$r$p$salt$hash", all base64 */
  passwordHash: text('password_hash').notNull(),
  isAdmin: boolean('is_admin').notNull().default(false),
  createdAt: createdAt(),
});

export const analyses = pgTable('analyses', {
  id: serial('id').primaryKey(),
  slug: varchar('slug', { length: 64 }).notNull().unique(),
  name: varchar('name', { length: 200 }).notNull(),
  description: text('description').notNull().default(''),
  blinding: blindingState('blinding').notNull().default('blinded'),
  /** Signal strength μ: start and bounds (docs/likelihood.md §1). */
  muStart: doublePrecision('mu_start').notNull().default(1),
  muMin: doublePrecision('mu_min').notNull().default(-10),
  muMax: doublePrecision('mu_max').notNull().default(20),
  /** Pruning rules: an effect below this relative size (percent) in every bin is a candidate; a shape whose χ² against flat has a p-value above pruneShapeP too. */
  pruneBelowPct: doublePrecision('prune_below_pct').notNull().default(0.1),
  pruneShapeP: doublePrecision('prune_shape_p').notNull().default(0.05),
  /** Constraint below this is flagged over-constrained (docs/likelihood.md §6). */
  overConstraintThreshold: doublePrecision('over_constraint_threshold').notNull().default(0.5),
  /**
   * Keys of every region that has been a signal region while the analysis was not unblinded (kept by
   * triggers in drizzle/0008): their observed counts stay withheld until unblinding, whatever
   * their role now, and in every version frozen earlier.
   */
  blindedRegions: text('blinded_regions').array().notNull().default(sql`'{}'::text[]`),
  /** Conveners who must approve an unblinding request (1 or 2), each other than the requester. */
  unblindingApprovals: integer('unblinding_approvals').notNull().default(1),
  /** The parameter the signal hypotheses differ in (e.g. { name: 'mass', unit: 'GeV' }); null: none declared. */
  hypothesisParameter: jsonb('hypothesis_parameter').$type<{ name: string; unit: string } | null>(),
  /** The labels every chart carries, on screen and in the approval pack: experiment, status (e.g. "Internal"), integrated luminosity, centre-of-mass energy. */
  plotLabels: jsonb('plot_labels').$type<{ experiment: string; status: string; luminosity: string; energy: string }>().notNull().default({ experiment: '', status: 'Internal', luminosity: '', energy: '' }),
  createdAt: createdAt(),
});

export const memberships = pgTable(
  'memberships',
  {
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    userId: integer('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    role: memberRole('role').notNull(),
    /** When the current role was given: a convener approves only a request made after it. */
    roleSince: timestamp('role_since', { withTimezone: true, mode: 'date' }).notNull().defaultNow(),
    /** Who added the member or gave the current role (the inviter, for an accepted invitation). */
    grantedById: integer('granted_by_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.analysisId, t.userId] })],
);

export const invitations = pgTable('invitations', {
  id: serial('id').primaryKey(),
  analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
  email: varchar('email', { length: 254 }).notNull(),
  role: memberRole('role').notNull(),
  /** SHA-256 of the token sent by e-mail; the token itself is never stored. */
  tokenHash: varchar('token_hash', { length: 64 }).notNull().unique(),
  invitedById: integer('invited_by_id').notNull().references(() => users.id),
  createdAt: createdAt(),
  acceptedAt: timestamp('accepted_at', { withTimezone: true }),
});

export const regions = pgTable(
  'regions',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    key: varchar('key', { length: 64 }).notNull(),
    label: varchar('label', { length: 200 }).notNull().default(''),
    role: regionRole('role').notNull(),
    observable: varchar('observable', { length: 100 }).notNull(),
    unit: varchar('unit', { length: 30 }).notNull().default(''),
    edges: jsonb('edges').$type<number[]>().notNull(),
    /** Observed counts per bin, null until data are recorded. Never sent while blinded for signal regions. */
    observed: jsonb('observed').$type<number[] | null>(),
    position: integer('position').notNull().default(0),
  },
  (t) => [uniqueIndex('regions_analysis_key').on(t.analysisId, t.key)],
);

export const processes = pgTable(
  'processes',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    key: varchar('key', { length: 64 }).notNull(),
    label: varchar('label', { length: 200 }).notNull().default(''),
    kind: processKind('kind').notNull(),
    colour: varchar('colour', { length: 7 }),
    position: integer('position').notNull().default(0),
  },
  (t) => [uniqueIndex('processes_analysis_key').on(t.analysisId, t.key)],
);

export const floatingNorms = pgTable(
  'floating_norms',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    key: varchar('key', { length: 64 }).notNull(),
    label: varchar('label', { length: 200 }).notNull().default(''),
    start: doublePrecision('start').notNull().default(1),
    min: doublePrecision('min').notNull().default(0),
    max: doublePrecision('max').notNull().default(10),
  },
  (t) => [uniqueIndex('floating_norms_analysis_key').on(t.analysisId, t.key)],
);

export const templates = pgTable(
  'templates',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    regionId: integer('region_id').notNull().references(() => regions.id, { onDelete: 'cascade' }),
    processId: integer('process_id').notNull().references(() => processes.id, { onDelete: 'cascade' }),
    nominal: jsonb('nominal').$type<number[]>().notNull(),
    variance: jsonb('variance').$type<number[] | null>(),
    /** The floating normalisation multiplying this template, if any. */
    floatingNormId: integer('floating_norm_id').references(() => floatingNorms.id, { onDelete: 'set null' }),
  },
  (t) => [uniqueIndex('templates_region_process').on(t.regionId, t.processId)],
);

/**
 * The analysis's signal hypotheses (shared/schemas/exchange.ts, exchangeHypothesisSchema): each
 * replaces signal templates of the model, with its own effects on them, for a scan over hypotheses.
 */
export const signalHypotheses = pgTable(
  'signal_hypotheses',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    key: varchar('key', { length: 64 }).notNull(),
    label: varchar('label', { length: 200 }).notNull().default(''),
    value: doublePrecision('value').notNull(),
    /** Exchange templates ({ region, process, nominal, variance? }) by region and process keys. */
    templates: jsonb('templates').$type<{ region: string; process: string; nominal: number[]; variance?: number[] }[]>().notNull(),
    /** Exchange effects with their systematic's key. */
    effects: jsonb('effects').$type<Record<string, unknown>[]>().notNull().default(sql`'[]'::jsonb`),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex('signal_hypotheses_analysis_key').on(t.analysisId, t.key)],
);

/**
 * The analysis's parameters of interest besides μ (shared/schemas/exchange.ts, exchangePoiSchema):
 * each a free factor on its own templates, which μ then no longer multiplies. Written by the import
 * of a model file, read back by its export (and so by every frozen version).
 */
export const parametersOfInterest = pgTable(
  'parameters_of_interest',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    key: varchar('key', { length: 64 }).notNull(),
    label: varchar('label', { length: 200 }).notNull().default(''),
    start: doublePrecision('start').notNull().default(1),
    min: doublePrecision('min').notNull().default(-10),
    max: doublePrecision('max').notNull().default(20),
    /** The templates it multiplies, by region and process keys. */
    targets: jsonb('targets').$type<{ region: string; process: string }[]>().notNull(),
    position: integer('position').notNull().default(0),
  },
  (t) => [uniqueIndex('parameters_of_interest_analysis_key').on(t.analysisId, t.key)],
);

export const groups = pgTable(
  'groups',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    name: varchar('name', { length: 64 }).notNull(),
    position: integer('position').notNull().default(0),
  },
  (t) => [uniqueIndex('groups_analysis_name').on(t.analysisId, t.name)],
);

/** A register entry: one systematic uncertainty, one nuisance parameter in the fit. */
export const entries = pgTable(
  'entries',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    key: varchar('key', { length: 64 }).notNull(),
    label: varchar('label', { length: 200 }).notNull(),
    groupId: integer('group_id').references(() => groups.id, { onDelete: 'set null' }),
    ownerId: integer('owner_id').references(() => users.id, { onDelete: 'set null' }),
    description: text('description').notNull().default(''),
    justification: text('justification').notNull().default(''),
    references: jsonb('references').$type<string[]>().notNull().default([]),
    state: entryState('state').notNull().default('draft'),
    /** Incremented on every change; clients send it back to detect concurrent edits. */
    version: integer('version').notNull().default(1),
    createdAt: createdAt(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('entries_analysis_key').on(t.analysisId, t.key), index('entries_owner').on(t.ownerId)],
);

export type EffectWarning = { code: string; message: string; bins?: number[] };

/** One piece of evidence an answer attaches (shared/schemas/review.ts, evidenceSchema). */
export type AnswerEvidence = { kind: 'fit' | 'variant'; fitId: number } | { kind: 'diagnosis'; fitId: number; parameter: string } | { kind: 'version'; version: number };

export const effects = pgTable(
  'effects',
  {
    id: serial('id').primaryKey(),
    entryId: integer('entry_id').notNull().references(() => entries.id, { onDelete: 'cascade' }),
    regionId: integer('region_id').notNull().references(() => regions.id, { onDelete: 'cascade' }),
    processId: integer('process_id').notNull().references(() => processes.id, { onDelete: 'cascade' }),
    kind: effectKind('kind').notNull(),
    /** scale: ratio κ (a number); shape: varied template (number per bin). */
    up: jsonb('up').$type<number | number[]>().notNull(),
    down: jsonb('down').$type<number | number[]>().notNull(),
    warnings: jsonb('warnings').$type<EffectWarning[]>().notNull().default([]),
    /** per-bin variance of the up and down shifts of a shape effect, when the upload gave them */
    upShiftVariance: jsonb('up_shift_variance').$type<number[] | null>(),
    downShiftVariance: jsonb('down_shift_variance').$type<number[] | null>(),
    /** pruned by an analyst: kept in the register, marked, and left out of frozen versions */
    pruned: boolean('pruned').notNull().default(false),
    /** a pruned shape whose normalisation stays: frozen versions carry it as a scale effect of Σν±/Σν⁰ */
    prunedToScale: boolean('pruned_to_scale').notNull().default(false),
    /** how a shape effect was smoothed (method and parameters) and its variation as uploaded, or null */
    smoothing: jsonb('smoothing').$type<{ method: string; params: Record<string, number>; original: { up: number[]; down: number[] }; by: string; at: string } | null>(),
    /** largest |variation − nominal| / nominal over the bins, in percent; stored when written (−1: not yet computed) */
    largestPct: doublePrecision('largest_pct').notNull().default(-1),
    /**
     * shape effects: the smaller p-value of the up and down shifts' χ² against a flat shift
     * (variations/precision.ts), stored when written; null where no test is possible (a scale
     * effect, no errors), −1 not yet computed
     */
    flatP: doublePrecision('flat_p').default(-1),
    uploadId: integer('upload_id').references(() => uploads.id, { onDelete: 'set null' }),
    /** shape effects: the nominal template per bin when the variation was written (null before this was kept) */
    nominalAtUpload: jsonb('nominal_at_upload').$type<number[] | null>(),
    /** set when the nominal it was uploaded against changed since: its varied yields may no longer mean what they meant */
    staleSince: timestamp('stale_since', { withTimezone: true }),
  },
  (t) => [uniqueIndex('effects_entry_region_process_kind').on(t.entryId, t.regionId, t.processId, t.kind)],
);

/**
 * What a change of the model does to the analysis's latest fit (fit/what-if.ts): after an upload
 * to an entry, or for effects an analyst considers pruning. Computed once, not a stored fit.
 */
export const impactChecks = pgTable(
  'impact_checks',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    entryId: integer('entry_id').references(() => entries.id, { onDelete: 'cascade' }),
    kind: varchar('kind', { length: 20 }).notNull(),
    /** the fit it is compared with */
    fitId: integer('fit_id').references(() => fits.id, { onDelete: 'cascade' }),
    state: varchar('state', { length: 20 }).notNull().default('running'),
    result: jsonb('result'),
    failure: text('failure'),
    createdById: integer('created_by_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [index('impact_checks_entry').on(t.entryId)],
);

/** Raw uploaded files kept for provenance. */
export const uploads = pgTable('uploads', {
  id: serial('id').primaryKey(),
  analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
  entryId: integer('entry_id').references(() => entries.id, { onDelete: 'cascade' }),
  userId: integer('user_id').notNull().references(() => users.id),
  filename: varchar('filename', { length: 255 }).notNull(),
  mediaType: varchar('media_type', { length: 100 }).notNull(),
  sha256: varchar('sha256', { length: 64 }).notNull(),
  size: integer('size').notNull(),
  content: text('content').notNull(),
  createdAt: createdAt(),
});

/** Every change to an entry or to the model: who, when, what (before/after). */
export const revisions = pgTable(
  'revisions',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    entryId: integer('entry_id').references(() => entries.id, { onDelete: 'cascade' }),
    authorId: integer('author_id').references(() => users.id, { onDelete: 'set null' }),
    action: varchar('action', { length: 40 }).notNull(),
    summary: text('summary').notNull(),
    before: jsonb('before'),
    after: jsonb('after'),
    createdAt: createdAt(),
  },
  (t) => [index('revisions_entry').on(t.entryId)],
);

/** A frozen, numbered, immutable snapshot of the whole model (the exchange document). */
export const modelVersions = pgTable(
  'model_versions',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    number: integer('number').notNull(),
    note: text('note').notNull().default(''),
    model: jsonb('model').notNull(),
    sha256: varchar('sha256', { length: 64 }).notNull(),
    forApproval: boolean('for_approval').notNull().default(false),
    /** Every register entry as it stood when frozen: key, review state and revision number (null before this was kept). */
    register: jsonb('register').$type<{ key: string; label: string; state: string; revision: number }[] | null>(),
    /** A version frozen for approval with open items: the convener's written reason, and the items as they stood. */
    approvalOverride: jsonb('approval_override').$type<{ reason: string; by: string; openItems: string[] } | null>(),
    createdById: integer('created_by_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex('model_versions_analysis_number').on(t.analysisId, t.number)],
);

/**
 * A review set: the standard family of linked fits of one model version that a convener reads side
 * by side (docs/likelihood.md §9; services/review-sets.service.ts).
 */
export const reviewSets = pgTable('review_sets', {
  id: serial('id').primaryKey(),
  analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
  modelVersionId: integer('model_version_id').notNull().references(() => modelVersions.id),
  label: varchar('label', { length: 200 }).notNull().default(''),
  /** blinded or not when it was made: which members it has depends on it */
  blinded: boolean('blinded').notNull(),
  createdById: integer('created_by_id').references(() => users.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
});

export const fits = pgTable(
  'fits',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    modelVersionId: integer('model_version_id').notNull().references(() => modelVersions.id),
    label: varchar('label', { length: 200 }).notNull().default(''),
    options: jsonb('options').notNull(),
    /** The review set it belongs to, and its part in it (e.g. "control-only", "held:jets"). */
    reviewSetId: integer('review_set_id').references((): AnyPgColumn => reviewSets.id, { onDelete: 'set null' }),
    variant: varchar('variant', { length: 80 }),
    /** A check run from a parameter's diagnosis: the fit and parameter it checks (e.g. its decorrelation). */
    checkOfFitId: integer('check_of_fit_id').references((): AnyPgColumn => fits.id, { onDelete: 'set null' }),
    checkOfParameter: varchar('check_of_parameter', { length: 128 }),
    /** Regions that enter its likelihood (by its version's roles and its options), fixed at start. */
    regionsInFit: text('regions_in_fit').array().notNull().default(sql`'{}'::text[]`),
    state: fitState('state').notNull().default('queued'),
    progress: doublePrecision('progress').notNull().default(0),
    stage: varchar('stage', { length: 100 }).notNull().default(''),
    /** Why a fit failed or was cancelled, in words a person can act on. */
    failure: text('failure'),
    result: jsonb('result'),
    /** μ̂, σ_μ, Z and the warning count of a converged fit, kept apart so lists need not read the result */
    headline: jsonb('headline').$type<{ mu: number; muError: number | null; z: number | null; warnings: number } | null>(),
    /** worker processes that ran its refits, with the number of shards each (queued work only) */
    workers: jsonb('workers').$type<Record<string, number> | null>(),
    /** the worker process coordinating it (queued work only): if it stops being seen, the fit is failed */
    coordinatedBy: varchar('coordinated_by', { length: 200 }),
    /**
     * What computed it: the package version and the SHA-256 of the engine's sources (server/fit/
     * and shared/) in the process that ran it, and the SHA-256 of its exact input (the version's
     * model and the options); null for fits stored before these were kept.
     */
    engineVersion: varchar('engine_version', { length: 100 }),
    engineHash: varchar('engine_hash', { length: 64 }),
    inputSha256: varchar('input_sha256', { length: 64 }),
    /** The fit this one reruns (same version and options), to list every number that differs. */
    reproducesFitId: integer('reproduces_fit_id').references((): AnyPgColumn => fits.id, { onDelete: 'set null' }),
    createdById: integer('created_by_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    startedAt: timestamp('started_at', { withTimezone: true }),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [index('fits_analysis').on(t.analysisId)],
);

/**
 * The two largest parts of a fit's result (the correlation matrix and the per-bin information of
 * every parameter: megabytes for a large model), kept apart from fits.result as JSON bytes,
 * gzip-compressed where the fit ran, so that storing a result costs the web server little and a
 * part is served as it is stored.
 */
export const fitParts = pgTable(
  'fit_parts',
  {
    fitId: integer('fit_id').notNull().references(() => fits.id, { onDelete: 'cascade' }),
    part: varchar('part', { length: 20 }).notNull(),
    /** 'gzip' or 'identity' (JSON text as stored before parts were compressed) */
    encoding: varchar('encoding', { length: 10 }).notNull(),
    data: bytea('data').notNull(),
  },
  (t) => [primaryKey({ columns: [t.fitId, t.part] })],
);

/**
 * Pseudo-experiments of a converged fit (shared/schemas/toys.ts): asked for by an analyst,
 * run in batches (threads here, or worker processes through the queue), summarised at the end.
 */
export const toyRuns = pgTable(
  'toy_runs',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    fitId: integer('fit_id').notNull().references(() => fits.id, { onDelete: 'cascade' }),
    label: varchar('label', { length: 200 }).notNull().default(''),
    count: integer('count').notNull(),
    hypothesis: jsonb('hypothesis').notNull(),
    seed: integer('seed').notNull(),
    state: fitState('state').notNull().default('queued'),
    progress: doublePrecision('progress').notNull().default(0),
    stage: varchar('stage', { length: 100 }).notNull().default(''),
    failure: text('failure'),
    /** the workers (processes, or threads here) that ran its batches, with the number each ran */
    workers: jsonb('workers').$type<Record<string, number> | null>(),
    /** the worker process coordinating it (queued work only) */
    coordinatedBy: varchar('coordinated_by', { length: 200 }),
    summary: jsonb('summary'),
    createdById: integer('created_by_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    startedAt: timestamp('started_at', { withTimezone: true }),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [index('toy_runs_fit').on(t.fitId)],
);

/**
 * A scan over the signal hypotheses of a model version (shared/schemas/hypothesis-scan.ts): one
 * fit per hypothesis, with local and global significance and limits against the hypothesis value.
 */
export const hypothesisScans = pgTable(
  'hypothesis_scans',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    modelVersionId: integer('model_version_id').notNull().references(() => modelVersions.id),
    label: varchar('label', { length: 200 }).notNull().default(''),
    options: jsonb('options').notNull(),
    /** Regions whose observed data enter it (none when the analysis is blinded: expected results only). */
    regionsInFit: text('regions_in_fit').array().notNull().default(sql`'{}'::text[]`),
    state: fitState('state').notNull().default('queued'),
    progress: doublePrecision('progress').notNull().default(0),
    stage: varchar('stage', { length: 100 }).notNull().default(''),
    failure: text('failure'),
    result: jsonb('result'),
    workers: jsonb('workers').$type<Record<string, number> | null>(),
    coordinatedBy: varchar('coordinated_by', { length: 200 }),
    createdById: integer('created_by_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    startedAt: timestamp('started_at', { withTimezone: true }),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [index('hypothesis_scans_analysis').on(t.analysisId)],
);

/**
 * Work split into shards (a fit's refits, a toy run's batches): the input every shard of a run
 * shares is stored once; each shard's output lands here with the worker that made it. Rows
 * live while their run does.
 */
export const workInputs = pgTable('work_inputs', {
  run: varchar('run', { length: 100 }).primaryKey(),
  data: bytea('data').notNull(),
  createdAt: createdAt(),
});

/** Which worker took which shard: a shard whose takers are all gone is sent again (runs/queue/queue.ts). */
export const workClaims = pgTable(
  'work_claims',
  {
    run: varchar('run', { length: 100 }).notNull(),
    shard: integer('shard').notNull(),
    worker: varchar('worker', { length: 200 }).notNull(),
    claimedAt: timestamp('claimed_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.run, t.shard, t.worker] })],
);

/** Worker processes taking queued work, each seen every few seconds while it runs (server/worker.ts). */
export const workerProcesses = pgTable('worker_processes', {
  name: varchar('name', { length: 200 }).primaryKey(),
  threads: integer('threads').notNull(),
  startedAt: timestamp('started_at', { withTimezone: true }).notNull().defaultNow(),
  seenAt: timestamp('seen_at', { withTimezone: true }).notNull().defaultNow(),
});

export const workResults = pgTable(
  'work_results',
  {
    run: varchar('run', { length: 100 }).notNull(),
    shard: integer('shard').notNull(),
    worker: varchar('worker', { length: 200 }).notNull(),
    /** null when the shard failed for good; error says why */
    data: bytea('data'),
    error: text('error'),
    attempts: integer('attempts').notNull().default(1),
    finishedAt: timestamp('finished_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.run, t.shard] })],
);

export const questions = pgTable(
  'questions',
  {
    id: serial('id').primaryKey(),
    analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
    /** What it is about: a parameter (entryId), a region or one of its bins (regionKey, bin), a fit (fitId) or a model version (versionId). */
    subject: varchar('subject', { length: 16 }).notNull().default('parameter'),
    entryId: integer('entry_id').references(() => entries.id, { onDelete: 'cascade' }),
    regionKey: varchar('region_key', { length: 64 }),
    /** 1-based bin of regionKey, for a question on one bin */
    bin: integer('bin'),
    versionId: integer('version_id').references(() => modelVersions.id, { onDelete: 'set null' }),
    /** the fit the question is about or was raised on */
    fitId: integer('fit_id').references(() => fits.id, { onDelete: 'set null' }),
    authorId: integer('author_id').references(() => users.id, { onDelete: 'set null' }),
    title: varchar('title', { length: 200 }).notNull(),
    body: text('body').notNull(),
    state: questionState('state').notNull().default('open'),
    createdAt: createdAt(),
    resolvedAt: timestamp('resolved_at', { withTimezone: true }),
    resolvedById: integer('resolved_by_id').references(() => users.id, { onDelete: 'set null' }),
  },
  (t) => [index('questions_entry').on(t.entryId)],
);

export const answers = pgTable(
  'answers',
  {
    id: serial('id').primaryKey(),
    questionId: integer('question_id').notNull().references(() => questions.id, { onDelete: 'cascade' }),
    authorId: integer('author_id').references(() => users.id, { onDelete: 'set null' }),
    body: text('body').notNull(),
    /** What the answer points to as its evidence: fits, variants, diagnoses, model versions. */
    evidence: jsonb('evidence').$type<AnswerEvidence[]>().notNull().default([]),
    createdAt: createdAt(),
  },
  // the questions list counts each question's answers, and a thread reads its own
  (t) => [index('answers_question').on(t.questionId)],
);

/** The blinding log: every request, approval and refusal, with who and when. */
export const blindingEvents = pgTable('blinding_events', {
  id: serial('id').primaryKey(),
  analysisId: integer('analysis_id').notNull().references(() => analyses.id, { onDelete: 'cascade' }),
  userId: integer('user_id').references(() => users.id, { onDelete: 'set null' }),
  action: varchar('action', { length: 20 }).notNull(),
  note: text('note').notNull().default(''),
  /** A request or decision on unblinding: the server's checklist as it stood then. */
  checklist: jsonb('checklist'),
  createdAt: createdAt(),
});

/** Every e-mail the product sends, as sent; admins read it on the Outbox screen. */
export const outbox = pgTable('outbox', {
  id: serial('id').primaryKey(),
  analysisId: integer('analysis_id').references(() => analyses.id, { onDelete: 'set null' }),
  to: text('to').notNull(),
  subject: text('subject').notNull(),
  body: text('body').notNull(),
  messageId: text('message_id'),
  delivered: boolean('delivered').notNull().default(false),
  error: text('error'),
  createdAt: createdAt(),
});

/** express-session store (connect-pg-simple's layout, created by our migrations). */
export const sessions = pgTable(
  'session',
  {
    sid: varchar('sid').primaryKey(),
    sess: json('sess').notNull(),
    expire: timestamp('expire', { precision: 6, mode: 'date' }).notNull(),
  },
  (t) => [index('IDX_session_expire').on(t.expire)],
);

