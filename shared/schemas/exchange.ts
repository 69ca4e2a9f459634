import { z } from 'zod';
import { PROCESS_KINDS, REGION_ROLES } from '../vocabulary';

/**
 * The exchange file: one JSON document holding a whole binned model (regions with their
 * binning and data, processes, nominal templates with variances, floating normalisations,
 * systematics with their effects and groups). Import, export, the fit engine and the
 * command line all read this one schema. Documented in docs/exchange-file.md.
 */

export const EXCHANGE_FORMAT = 'plumbline.model';
/** The version written. Version 1 (no signal hypotheses) is still read: a model with one hypothesis, its own templates. */
export const EXCHANGE_VERSION = 2;
export const READABLE_EXCHANGE_VERSIONS = [1, 2] as const;

/** Keys name things inside one model: short, stable, URL-safe. */
export const keySchema = z
  .string()
  .min(1, 'must not be empty')
  .max(64, 'must be at most 64 characters')
  .regex(/^[A-Za-z][A-Za-z0-9_.-]*$/, 'must start with a letter and use only letters, digits, "_", "." or "-"');

const finite = z.number({ error: 'must be a finite number' });

/**
 * Bounds that keep every fit inside the range of a double: no real sample holds 1e15 events, and
 * a ±1σ ratio beyond 1e6 or below 1e-6 is a unit mistake rather than a systematic. Within them
 * the sums of squares and the interpolated yields of a fit stay far from overflow.
 */
export const LIMITS = { yield: 1e15, variance: 1e30, ratio: 1e6, parameter: 1e6 } as const;

/** A yield, count or varied yield, in events. */
export const yieldNumber = finite.min(0, 'must not be negative').max(LIMITS.yield, 'must be at most 1e15 events (check the units)');
/** A template's variance (sum of squared weights). */
export const varianceNumber = finite.min(0, 'must not be negative').max(LIMITS.variance, 'must be at most 1e30');
/** A yield ratio to nominal at ±1σ. */
export const ratioNumber = finite.gt(0, 'must be greater than 0').min(1 / LIMITS.ratio, 'must be at least 1e-6 (a ratio to nominal, e.g. 0.97)').max(LIMITS.ratio, 'must be at most 1e6 (a ratio to nominal, e.g. 1.04)');
/** A parameter's start or bound. */
const parameterNumber = finite.min(-LIMITS.parameter, 'must be at least -1e6').max(LIMITS.parameter, 'must be at most 1e6');

export const regionRoleSchema = z.enum(REGION_ROLES);
export type RegionRole = z.infer<typeof regionRoleSchema>;

export const exchangeRegionSchema = z.strictObject({
  key: keySchema,
  label: z.string().max(200).optional(),
  role: regionRoleSchema,
  observable: z.strictObject({ name: z.string().min(1).max(100), unit: z.string().max(30) }),
  /** Bin edges e_0 < … < e_B (B bins). */
  edges: z.array(finite).min(2, 'needs at least two edges (one bin)').max(2001),
  /** Observed counts per bin; absent when the data are withheld (blinded signal region) or not yet taken. */
  observed: z.array(yieldNumber).optional(),
});
export type ExchangeRegion = z.infer<typeof exchangeRegionSchema>;

export const exchangeProcessSchema = z.strictObject({
  key: keySchema,
  label: z.string().max(200).optional(),
  /** Signal processes are multiplied by the signal strength μ. */
  kind: z.enum(PROCESS_KINDS),
  /** Display colour (#rrggbb); optional. */
  colour: z.string().regex(/^#[0-9a-fA-F]{6}$/).optional(),
});
export type ExchangeProcess = z.infer<typeof exchangeProcessSchema>;

export const boundedParameterSchema = z
  .strictObject({ start: parameterNumber, min: parameterNumber, max: parameterNumber })
  .check((ctx) => {
    const { start, min, max } = ctx.value;
    if (!(min < max)) ctx.issues.push({ code: 'custom', message: 'min must be below max', path: ['min'], input: min });
    else if (start < min || start > max) ctx.issues.push({ code: 'custom', message: 'start must lie within [min, max]', path: ['start'], input: start });
  });

export const exchangeFloatingNormSchema = z.strictObject({
  key: keySchema,
  label: z.string().max(200).optional(),
  start: parameterNumber.default(1),
  min: parameterNumber.default(0),
  max: parameterNumber.default(10),
  /** The (region, process) templates this factor multiplies. */
  targets: z.array(z.strictObject({ region: keySchema, process: keySchema })).min(1, 'must multiply at least one template'),
});
export type ExchangeFloatingNorm = z.infer<typeof exchangeFloatingNormSchema>;

/**
 * Version 2: a parameter of interest besides μ (a signal strength per production mode, say): a free,
 * unconstrained factor on its templates, which μ then no longer multiplies.
 */
export const exchangePoiSchema = z.strictObject({
  key: keySchema,
  label: z.string().max(200).optional(),
  start: parameterNumber.default(1),
  min: parameterNumber.default(-10),
  max: parameterNumber.default(20),
  /** The (region, process) templates this parameter multiplies. */
  targets: z.array(z.strictObject({ region: keySchema, process: keySchema })).min(1, 'must multiply at least one template'),
});
export type ExchangePoi = z.infer<typeof exchangePoiSchema>;

export const exchangeTemplateSchema = z.strictObject({
  region: keySchema,
  process: keySchema,
  nominal: z.array(yieldNumber),
  /** Variance of the nominal from limited simulation (sum of squared weights), per bin. */
  variance: z.array(varianceNumber).optional(),
});
export type ExchangeTemplate = z.infer<typeof exchangeTemplateSchema>;

export const scaleEffectSchema = z.strictObject({
  region: keySchema,
  process: keySchema,
  kind: z.literal('scale'),
  /** Yield ratio to nominal at θ = +1 and θ = −1 (e.g. 1.04 and 0.97). */
  up: ratioNumber,
  down: ratioNumber,
});

export const shapeEffectSchema = z.strictObject({
  region: keySchema,
  process: keySchema,
  kind: z.literal('shape'),
  /** Varied templates at θ = +1 and θ = −1, per bin. */
  up: z.array(yieldNumber),
  down: z.array(yieldNumber),
});

export const effectSchema = z.discriminatedUnion('kind', [scaleEffectSchema, shapeEffectSchema]);
export type Effect = z.infer<typeof effectSchema>;
export type ScaleEffect = z.infer<typeof scaleEffectSchema>;
export type ShapeEffect = z.infer<typeof shapeEffectSchema>;

export const exchangeSystematicSchema = z.strictObject({
  key: keySchema,
  label: z.string().max(200).optional(),
  group: z.string().max(64).optional(),
  description: z.string().max(10_000).optional(),
  effects: z.array(effectSchema),
});
export type ExchangeSystematic = z.infer<typeof exchangeSystematicSchema>;

/** An effect of one systematic on a template of a signal hypothesis. */
export const hypothesisEffectSchema = z.discriminatedUnion('kind', [scaleEffectSchema.extend({ systematic: keySchema }), shapeEffectSchema.extend({ systematic: keySchema })]);
export type HypothesisEffect = z.infer<typeof hypothesisEffectSchema>;

/**
 * One signal hypothesis (e.g. a resonance of mass 350 GeV): the templates of signal processes it
 * replaces, and the effects of systematics on those templates. A scan over hypotheses fits the
 * model once per hypothesis, with these templates in place of the model's own for the same
 * (region, process); every other template, and every effect on it, stays as it is.
 */
export const exchangeHypothesisSchema = z.strictObject({
  key: keySchema,
  label: z.string().max(200).optional(),
  /** The value of the hypothesis parameter (e.g. the mass). */
  value: finite,
  templates: z.array(exchangeTemplateSchema).min(1, 'must give at least one signal template'),
  effects: z.array(hypothesisEffectSchema).default([]),
});
export type ExchangeHypothesis = z.infer<typeof exchangeHypothesisSchema>;

export const exchangeHypothesesSchema = z.strictObject({
  /** The parameter the hypotheses differ in (e.g. mass, GeV). */
  parameter: z.strictObject({ name: z.string().min(1).max(100), unit: z.string().max(30) }),
  points: z.array(exchangeHypothesisSchema).min(1, 'needs at least one hypothesis').max(500, 'at most 500 hypotheses'),
});
export type ExchangeHypotheses = z.infer<typeof exchangeHypothesesSchema>;

const exchangeModelShape = z.strictObject({
  format: z.literal(EXCHANGE_FORMAT),
  version: z.union([z.literal(1), z.literal(2)], { error: 'must be 1 or 2 (the exchange file versions this product reads)' }),
  name: z.string().min(1).max(200),
  signalStrength: boundedParameterSchema.default({ start: 1, min: -10, max: 20 }),
  regions: z.array(exchangeRegionSchema).min(1, 'needs at least one region'),
  processes: z.array(exchangeProcessSchema).min(1, 'needs at least one process'),
  floatingNorms: z.array(exchangeFloatingNormSchema).default([]),
  /** Version 2: parameters of interest besides μ (absent: μ is the only one). */
  parametersOfInterest: z.array(exchangePoiSchema).optional(),
  templates: z.array(exchangeTemplateSchema),
  systematics: z.array(exchangeSystematicSchema).default([]),
  /** Version 2: the signal hypotheses a scan fits in turn (absent: the model's own templates are its one hypothesis). */
  signalHypotheses: exchangeHypothesesSchema.optional(),
});

type ModelShape = z.infer<typeof exchangeModelShape>;
type Issue = { message: string; path: (string | number)[] };

function duplicates(keys: string[], base: (string | number)[], issues: Issue[]) {
  const seen = new Set<string>();
  keys.forEach((k, i) => {
    if (seen.has(k)) issues.push({ message: `duplicate key "${k}"`, path: [...base, i, 'key'] });
    seen.add(k);
  });
}

/** Cross-references and bin counts: everything a single field cannot check alone. */
export function modelConsistencyIssues(m: ModelShape): Issue[] {
  const issues: Issue[] = [];
  duplicates(m.regions.map((r) => r.key), ['regions'], issues);
  duplicates(m.processes.map((p) => p.key), ['processes'], issues);
  duplicates(m.floatingNorms.map((f) => f.key), ['floatingNorms'], issues);
  duplicates(m.systematics.map((s) => s.key), ['systematics'], issues);

  const bins = new Map<string, number>();
  m.regions.forEach((r, i) => {
    for (let b = 1; b < r.edges.length; b++) {
      if (!(r.edges[b] > r.edges[b - 1])) {
        issues.push({ message: `bin edges must increase strictly (edge ${b} is not above edge ${b - 1})`, path: ['regions', i, 'edges', b] });
        break;
      }
    }
    const nBins = r.edges.length - 1;
    bins.set(r.key, nBins);
    if (r.observed && r.observed.length !== nBins)
      issues.push({ message: `has ${r.observed.length} observed counts but the region has ${nBins} bins`, path: ['regions', i, 'observed'] });
  });
  const processes = new Set(m.processes.map((p) => p.key));

  const pairIssue = (region: string, process: string, path: (string | number)[]) => {
    if (!bins.has(region)) issues.push({ message: `unknown region "${region}"`, path: [...path, 'region'] });
    if (!processes.has(process)) issues.push({ message: `unknown process "${process}"`, path: [...path, 'process'] });
  };
  const lengthIssue = (values: number[] | undefined, region: string, path: (string | number)[]) => {
    const n = bins.get(region);
    if (values && n !== undefined && values.length !== n)
      issues.push({ message: `has ${values.length} values but region "${region}" has ${n} bins`, path });
  };

  const templatePairs = new Set<string>();
  m.templates.forEach((t, i) => {
    const path = ['templates', i];
    pairIssue(t.region, t.process, path);
    const pair = `${t.region}\u0000${t.process}`;
    if (templatePairs.has(pair)) issues.push({ message: `a second template for region "${t.region}" and process "${t.process}"`, path });
    templatePairs.add(pair);
    lengthIssue(t.nominal, t.region, [...path, 'nominal']);
    lengthIssue(t.variance, t.region, [...path, 'variance']);
  });
  const hasTemplate = (region: string, process: string) => templatePairs.has(`${region}\u0000${process}`);

  const normTargets = new Set<string>();
  m.floatingNorms.forEach((f, i) => {
    if (!(f.min < f.max)) issues.push({ message: 'min must be below max', path: ['floatingNorms', i, 'min'] });
    else if (f.start < f.min || f.start > f.max) issues.push({ message: 'start must lie within [min, max]', path: ['floatingNorms', i, 'start'] });
    f.targets.forEach((t, j) => {
      const path = ['floatingNorms', i, 'targets', j];
      pairIssue(t.region, t.process, path);
      const pair = `${t.region}\u0000${t.process}`;
      if (normTargets.has(pair)) issues.push({ message: `region "${t.region}", process "${t.process}" already has a floating normalisation`, path });
      normTargets.add(pair);
    });
  });

  m.systematics.forEach((s, i) => {
    const seen = new Set<string>();
    s.effects.forEach((e, j) => {
      const path = ['systematics', i, 'effects', j];
      pairIssue(e.region, e.process, path);
      if (bins.has(e.region) && processes.has(e.process) && !hasTemplate(e.region, e.process))
        issues.push({ message: `region "${e.region}" has no template for process "${e.process}" to vary`, path });
      const pair = `${e.region}\u0000${e.process}\u0000${e.kind}`;
      if (seen.has(pair)) issues.push({ message: `a second ${e.kind} effect on region "${e.region}", process "${e.process}"`, path });
      seen.add(pair);
      if (e.kind === 'shape') {
        lengthIssue(e.up, e.region, [...path, 'up']);
        lengthIssue(e.down, e.region, [...path, 'down']);
      }
    });
  });
  if (m.parametersOfInterest) poiIssues(m, normTargets, pairIssue, hasTemplate, issues);
  if (m.signalHypotheses) {
    if (m.version === 1) issues.push({ message: 'signal hypotheses need exchange file version 2', path: ['signalHypotheses'] });
    hypothesisIssues(m, bins, hasTemplate, issues);
  }
  return issues;
}

/**
 * Parameters of interest besides μ: keys distinct from μ, the floating normalisations and the
 * systematics; each target a template the model has, multiplied by at most one parameter of
 * interest and by no floating normalisation.
 */
function poiIssues(
  m: ModelShape,
  normTargets: Set<string>,
  pairIssue: (region: string, process: string, path: (string | number)[]) => void,
  hasTemplate: (region: string, process: string) => boolean,
  issues: Issue[],
) {
  const pois = m.parametersOfInterest!;
  if (m.version === 1) issues.push({ message: 'parameters of interest besides μ need exchange file version 2', path: ['parametersOfInterest'] });
  duplicates(pois.map((p) => p.key), ['parametersOfInterest'], issues);
  const taken = new Set(['mu', ...m.floatingNorms.map((f) => f.key), ...m.systematics.map((s) => s.key)]);
  const targets = new Set<string>();
  pois.forEach((p, i) => {
    if (taken.has(p.key)) issues.push({ message: `key "${p.key}" is already μ, a floating normalisation or a systematic`, path: ['parametersOfInterest', i, 'key'] });
    if (!(p.min < p.max)) issues.push({ message: 'min must be below max', path: ['parametersOfInterest', i, 'min'] });
    else if (p.start < p.min || p.start > p.max) issues.push({ message: 'start must lie within [min, max]', path: ['parametersOfInterest', i, 'start'] });
    p.targets.forEach((t, j) => {
      const path = ['parametersOfInterest', i, 'targets', j];
      const before = issues.length;
      pairIssue(t.region, t.process, path);
      const pair = `${t.region}\u0000${t.process}`;
      if (issues.length === before && !hasTemplate(t.region, t.process)) issues.push({ message: `region "${t.region}" has no template for process "${t.process}" to multiply`, path });
      if (normTargets.has(pair)) issues.push({ message: `region "${t.region}", process "${t.process}" already has a floating normalisation`, path });
      if (targets.has(pair)) issues.push({ message: `region "${t.region}", process "${t.process}" already has a parameter of interest`, path });
      targets.add(pair);
    });
  });
}

/**
 * A hypothesis's templates replace signal templates the model has, bin for bin; its effects name
 * systematics of the model and act on its own templates; a shape effect of the model on a
 * replaced template must be given for the hypothesis too (its yields belong to the template
 * replaced). Values are distinct, so that a scan has one point per value.
 */
function hypothesisIssues(m: ModelShape, bins: Map<string, number>, hasTemplate: (region: string, process: string) => boolean, issues: Issue[]) {
  const h = m.signalHypotheses!;
  const base = ['signalHypotheses', 'points'];
  duplicates(h.points.map((p) => p.key), base, issues);
  const values = new Set<number>();
  const kinds = new Map(m.processes.map((p) => [p.key, p.kind]));
  const systematics = new Set(m.systematics.map((s) => s.key));
  // shape effects of the model, by (region, process): systematic keys
  const shapes = new Map<string, string[]>();
  for (const s of m.systematics) for (const e of s.effects) if (e.kind === 'shape') shapes.set(`${e.region}\u0000${e.process}`, [...(shapes.get(`${e.region}\u0000${e.process}`) ?? []), s.key]);
  h.points.forEach((p, i) => {
    const path = [...base, i];
    if (values.has(p.value)) issues.push({ message: `a second hypothesis with ${h.parameter.name} = ${p.value}`, path: [...path, 'value'] });
    values.add(p.value);
    const pairs = new Set<string>();
    p.templates.forEach((t, j) => {
      const tp = [...path, 'templates', j];
      const pair = `${t.region}\u0000${t.process}`;
      if (!bins.has(t.region)) issues.push({ message: `unknown region "${t.region}"`, path: [...tp, 'region'] });
      else if (!kinds.has(t.process)) issues.push({ message: `unknown process "${t.process}"`, path: [...tp, 'process'] });
      else if (kinds.get(t.process) !== 'signal') issues.push({ message: `process "${t.process}" is not a signal process: a hypothesis replaces signal templates only`, path: [...tp, 'process'] });
      else if (!hasTemplate(t.region, t.process)) issues.push({ message: `the model has no template for region "${t.region}" and process "${t.process}" to replace`, path: tp });
      if (pairs.has(pair)) issues.push({ message: `a second template for region "${t.region}" and process "${t.process}"`, path: tp });
      pairs.add(pair);
      const n = bins.get(t.region);
      if (n !== undefined && t.nominal.length !== n) issues.push({ message: `has ${t.nominal.length} values but region "${t.region}" has ${n} bins`, path: [...tp, 'nominal'] });
      if (n !== undefined && t.variance && t.variance.length !== n) issues.push({ message: `has ${t.variance.length} values but region "${t.region}" has ${n} bins`, path: [...tp, 'variance'] });
    });
    const given = new Set<string>();
    p.effects.forEach((e, j) => {
      const ep = [...path, 'effects', j];
      const pair = `${e.region}\u0000${e.process}`;
      if (!systematics.has(e.systematic)) issues.push({ message: `unknown systematic "${e.systematic}"`, path: [...ep, 'systematic'] });
      if (!pairs.has(pair)) issues.push({ message: `this hypothesis gives no template for region "${e.region}" and process "${e.process}"`, path: ep });
      const key = `${e.systematic}\u0000${pair}\u0000${e.kind}`;
      if (given.has(key)) issues.push({ message: `a second ${e.kind} effect of "${e.systematic}" on region "${e.region}", process "${e.process}"`, path: ep });
      given.add(key);
      if (e.kind === 'shape') {
        const n = bins.get(e.region);
        if (n !== undefined && e.up.length !== n) issues.push({ message: `has ${e.up.length} values but region "${e.region}" has ${n} bins`, path: [...ep, 'up'] });
        if (n !== undefined && e.down.length !== n) issues.push({ message: `has ${e.down.length} values but region "${e.region}" has ${n} bins`, path: [...ep, 'down'] });
      }
    });
    for (const pair of pairs) {
      for (const systematic of shapes.get(pair) ?? []) {
        if (given.has(`${systematic}\u0000${pair}\u0000shape`)) continue;
        const [region, process] = pair.split('\u0000');
        issues.push({ message: `replaces the template of region "${region}", process "${process}", which systematic "${systematic}" varies by shape: give that shape effect for this hypothesis too`, path: [...path, 'effects'] });
      }
    }
  });
}

export const exchangeModelSchema = exchangeModelShape.check((ctx) => {
  for (const issue of modelConsistencyIssues(ctx.value)) ctx.issues.push({ code: 'custom', input: ctx.value, ...issue });
});
export type ExchangeModel = z.infer<typeof exchangeModelSchema>;
/** The document as written (defaults not yet applied). */
export type ExchangeModelInput = z.input<typeof exchangeModelSchema>;
