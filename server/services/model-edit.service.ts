import type { Region, Process } from '@shared/schemas/api';
import { processView, regionView } from './model.service';
import {
  floatingNormInputSchema,
  modelCsvKindSchema,
  observedInputSchema,
  processInputSchema,
  processPatchSchema,
  regionInputSchema,
  regionPatchSchema,
  templateInputSchema,
  type ModelUploadResult,
} from '@shared/schemas/register';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { indexModel, loadModelRows } from '../db/model.repository';
import { addRevision, type DbOrTx } from '../db/revisions.repository';
import {
  countEffects,
  countTemplatesOfRegion,
  deleteFloatingNormRow,
  deleteProcessRow,
  deleteRegionRow,
  deleteTemplateRow,
  floatingNormByKey,
  insertFloatingNorm,
  insertProcess,
  insertRegion,
  parametersOfInterestUsing,
  processByKey,
  regionByKey,
  saveTemplate,
  templateOf,
  updateProcessRow,
  updateRegionRow,
} from '../db/model-edits.repository';
import { conflict, notFound, unprocessable } from '../errors';
import { readUpload } from '../uploads/upload';
import { readObservedCsv, readTemplatesCsv } from './template-files';
import { assertRoleMayChange, isWithheld } from './blinding.service';
import { assertNoHypothesesOn } from './signal-hypotheses.service';
import { markStaleEffects, notifyStale, type StaleNotice } from './stale-effects.service';

/**
 * The analysts' model editor. Every change is refused whole when it would leave the model
 * inconsistent (templates or variations of the wrong length, effects on a removed template, a
 * signal hypothesis replacing a template that is gone or no longer a signal's), and every
 * accepted change is recorded as a revision of the model.
 */

const modelRevision = (db: DbOrTx, access: Access, action: string, summary: string, before?: unknown, after?: unknown) =>
  addRevision(db, { analysisId: access.analysis.id, entryId: null, authorId: access.userId, action, summary, before, after });

function edgesIssue(edges: number[]) {
  for (let b = 1; b < edges.length; b++)
    if (!(edges[b] > edges[b - 1])) return unprocessable('Bin edges must increase strictly', [{ path: ['edges', b], message: `edge ${b + 1} (${edges[b]}) is not above edge ${b} (${edges[b - 1]})` }]);
  return null;
}

async function findRegion(db: DbOrTx, access: Access, key: string) {
  const r = await regionByKey(db, access.analysis.id, key);
  if (!r) throw notFound(`Region "${key}"`);
  return r;
}
async function findProcess(db: DbOrTx, access: Access, key: string) {
  const p = await processByKey(db, access.analysis.id, key);
  if (!p) throw notFound(`Process "${key}"`);
  return p;
}
/**
 * A template that a parameter of interest multiplies stays while the model declares it (they are
 * declared by the model file: docs/exchange-file.md), and floats with no normalisation.
 */
async function refuseIfMultiplied(db: DbOrTx, access: Access, on: { region?: string; process?: string }, what: string, todo: string) {
  const keys = await parametersOfInterestUsing(db, access.analysis.id, on);
  if (keys.length)
    throw conflict(`The parameter${keys.length === 1 ? '' : 's'} of interest ${keys.map((k) => `"${k}"`).join(', ')} multipl${keys.length === 1 ? 'ies' : 'y'} ${what}. ${todo}`);
}

/** A region, process or template that register effects vary stays until those effects are removed. */
async function refuseIfVaried(db: DbOrTx, varying: { regionId?: number; processId?: number }, what: string) {
  const n = await countEffects(db, varying);
  if (n > 0) throw conflict(`${n} register effect${n === 1 ? '' : 's'} vary ${what}. Remove them from their entries first.`);
}

export async function createRegion(ctx: AppContext, access: Access, body: unknown): Promise<Region> {
  const input = regionInputSchema.parse(body);
  const bad = edgesIssue(input.edges);
  if (bad) throw bad;
  if (await regionByKey(ctx.db, access.analysis.id, input.key)) throw conflict(`A region with the key "${input.key}" already exists.`);
  return ctx.db.transaction(async (tx) => {
    const r = await insertRegion(tx, { analysisId: access.analysis.id, ...input });
    await modelRevision(tx, access, 'region.created', `Added the ${r.role} region "${r.key}" with ${r.edges.length - 1} bins.`, undefined, input);
    return regionView(access, r);
  });
}

export async function updateRegion(ctx: AppContext, access: Access, key: string, body: unknown): Promise<Region> {
  const input = regionPatchSchema.parse(body);
  const region = await findRegion(ctx.db, access, key);
  if (input.role) assertRoleMayChange(access.analysis, region, input.role);
  if (input.edges) {
    const bad = edgesIssue(input.edges);
    if (bad) throw bad;
    const bins = input.edges.length - 1;
    if (bins !== region.edges.length - 1) {
      await assertNoHypothesesOn(ctx.db, access, { region: key }, `templates of region "${key}" with its ${region.edges.length - 1} bins`, 'Change the edges without changing the bin count, or remove those hypotheses first.');
      const n = await countTemplatesOfRegion(ctx.db, region.id);
      if (n > 0 || region.observed)
        throw conflict(`Region "${key}" has ${n} template${n === 1 ? '' : 's'}${region.observed ? ' and observed data' : ''} with ${region.edges.length - 1} bins. Change the edges without changing the bin count, or remove them first.`);
    }
  }
  return ctx.db.transaction(async (tx) => {
    const r = await updateRegionRow(tx, region.id, input);
    await modelRevision(tx, access, 'region.edited', `Changed ${Object.keys(input).join(', ')} of region "${key}".`, { ...region, observed: undefined }, { ...r, observed: undefined });
    return regionView(access, r);
  });
}

export async function deleteRegion(ctx: AppContext, access: Access, key: string) {
  const region = await findRegion(ctx.db, access, key);
  await refuseIfVaried(ctx.db, { regionId: region.id }, `templates of region "${key}"`);
  await assertNoHypothesesOn(ctx.db, access, { region: key }, `templates of region "${key}"`, 'Remove those hypotheses, or replace them without this region, first.');
  await refuseIfMultiplied(ctx.db, access, { region: key }, `templates of region "${key}"`, 'Parameters of interest are set by importing a model file: import one without this region into a new analysis.');
  await ctx.db.transaction(async (tx) => {
    await deleteRegionRow(tx, region.id);
    await modelRevision(tx, access, 'region.deleted', `Removed region "${key}" and its templates.`, { key, role: region.role, edges: region.edges });
  });
}

export async function setObserved(ctx: AppContext, access: Access, key: string, body: unknown): Promise<Region> {
  const { observed } = observedInputSchema.parse(body);
  const region = await findRegion(ctx.db, access, key);
  const bins = region.edges.length - 1;
  if (observed && observed.length !== bins) throw unprocessable(`Region "${key}" has ${bins} bins but ${observed.length} observed counts were given`, [{ path: ['observed'], message: `needs ${bins} values` }]);
  return ctx.db.transaction(async (tx) => {
    const r = await updateRegionRow(tx, region.id, { observed });
    // the revision records that data changed, not the counts themselves (they may be blinded)
    await modelRevision(tx, access, 'data.recorded', observed ? `Recorded observed data in region "${key}" (${bins} bins).` : `Cleared the observed data of region "${key}".`);
    return regionView(access, r);
  });
}

export async function createProcess(ctx: AppContext, access: Access, body: unknown): Promise<Process> {
  const input = processInputSchema.parse(body);
  if (await processByKey(ctx.db, access.analysis.id, input.key)) throw conflict(`A process with the key "${input.key}" already exists.`);
  return ctx.db.transaction(async (tx) => {
    const p = await insertProcess(tx, { analysisId: access.analysis.id, ...input });
    await modelRevision(tx, access, 'process.created', `Added the ${p.kind} process "${p.key}".`, undefined, input);
    return processView(p);
  });
}

export async function updateProcess(ctx: AppContext, access: Access, key: string, body: unknown): Promise<Process> {
  const input = processPatchSchema.parse(body);
  const process = await findProcess(ctx.db, access, key);
  if (input.kind && input.kind !== process.kind)
    await assertNoHypothesesOn(ctx.db, access, { process: key }, `templates of the signal process "${key}"`, 'A hypothesis replaces signal templates only: keep the process a signal, or remove those hypotheses first.');
  return ctx.db.transaction(async (tx) => {
    const p = await updateProcessRow(tx, process.id, input);
    await modelRevision(tx, access, 'process.edited', `Changed ${Object.keys(input).join(', ')} of process "${key}".`, process, p);
    return processView(p);
  });
}

export async function deleteProcess(ctx: AppContext, access: Access, key: string) {
  const process = await findProcess(ctx.db, access, key);
  await refuseIfVaried(ctx.db, { processId: process.id }, `templates of process "${key}"`);
  await assertNoHypothesesOn(ctx.db, access, { process: key }, `templates of process "${key}"`, 'Remove those hypotheses, or replace them without this process, first.');
  await refuseIfMultiplied(ctx.db, access, { process: key }, `templates of process "${key}"`, 'Parameters of interest are set by importing a model file: import one without this process into a new analysis.');
  await ctx.db.transaction(async (tx) => {
    await deleteProcessRow(tx, process.id);
    await modelRevision(tx, access, 'process.deleted', `Removed process "${key}" and its templates.`, { key, kind: process.kind });
  });
}

export async function createFloatingNorm(ctx: AppContext, access: Access, body: unknown) {
  const input = floatingNormInputSchema.parse(body);
  if (!(input.min < input.max) || input.start < input.min || input.start > input.max)
    throw unprocessable('The start value must lie within [min, max], and min must be below max', [{ path: ['start'], message: 'must lie within [min, max]' }]);
  if (await floatingNormByKey(ctx.db, access.analysis.id, input.key)) throw conflict(`A floating normalisation with the key "${input.key}" already exists.`);
  return ctx.db.transaction(async (tx) => {
    const f = await insertFloatingNorm(tx, { analysisId: access.analysis.id, ...input });
    await modelRevision(tx, access, 'norm.created', `Added the floating normalisation "${f.key}".`, undefined, input);
    return { key: f.key, label: f.label, start: f.start, min: f.min, max: f.max };
  });
}

export async function deleteFloatingNorm(ctx: AppContext, access: Access, key: string) {
  const f = await floatingNormByKey(ctx.db, access.analysis.id, key);
  if (!f) throw notFound(`Floating normalisation "${key}"`);
  await ctx.db.transaction(async (tx) => {
    await deleteFloatingNormRow(tx, f.id);
    await modelRevision(tx, access, 'norm.deleted', `Removed the floating normalisation "${key}"; its templates no longer float.`, f);
  });
}

export async function putTemplate(ctx: AppContext, access: Access, regionKey: string, processKey: string, body: unknown, baseUrl = '') {
  const input = templateInputSchema.parse(body);
  const region = await findRegion(ctx.db, access, regionKey);
  const process = await findProcess(ctx.db, access, processKey);
  const bins = region.edges.length - 1;
  const issues = (['nominal', 'variance'] as const)
    .filter((k) => input[k] && input[k]!.length !== bins)
    .map((k) => ({ path: [k], message: `has ${input[k]!.length} values but region "${regionKey}" has ${bins} bins` }));
  if (issues.length) throw unprocessable(`The template does not match the binning of region "${regionKey}"`, issues);
  let floatingNormId: number | null = null;
  if (input.floatingNorm) {
    const f = await floatingNormByKey(ctx.db, access.analysis.id, input.floatingNorm);
    if (!f) throw unprocessable(`There is no floating normalisation "${input.floatingNorm}"`, [{ path: ['floatingNorm'], message: 'unknown key' }]);
    const pois = await parametersOfInterestUsing(ctx.db, access.analysis.id, { region: regionKey, process: processKey });
    if (pois.length)
      throw unprocessable(`The parameter of interest "${pois[0]}" multiplies this template, so it takes no floating normalisation`, [
        { path: ['floatingNorm'], message: `leave it empty: "${pois[0]}" already multiplies the template of process "${processKey}" in region "${regionKey}"` },
      ]);
    floatingNormId = f.id;
  }
  const { saved, notices } = await ctx.db.transaction(async (tx) => {
    const old = await templateOf(tx, region.id, process.id);
    await saveTemplate(tx, old?.id ?? null, { analysisId: access.analysis.id, regionId: region.id, processId: process.id, nominal: input.nominal, variance: input.variance, floatingNormId });
    await modelRevision(tx, access, 'template.saved', `${old ? 'Replaced' : 'Added'} the template of process "${processKey}" in region "${regionKey}".`, old ? { nominal: old.nominal } : undefined, { nominal: input.nominal });
    // the variations made against the old nominal go stale
    const notices = await markStaleEffects(tx, access, { regionId: region.id, processId: process.id, region: regionKey, process: processKey, before: old?.nominal ?? null, after: input.nominal });
    return { saved: { region: regionKey, process: processKey, nominal: input.nominal, variance: input.variance, floatingNorm: input.floatingNorm }, notices };
  });
  await notifyStale(ctx, access, notices, baseUrl);
  return saved;
}

export async function deleteTemplate(ctx: AppContext, access: Access, regionKey: string, processKey: string) {
  const region = await findRegion(ctx.db, access, regionKey);
  const process = await findProcess(ctx.db, access, processKey);
  const t = await templateOf(ctx.db, region.id, process.id);
  if (!t) throw notFound(`The template of process "${processKey}" in region "${regionKey}"`);
  await refuseIfVaried(ctx.db, { regionId: region.id, processId: process.id }, 'this template');
  await assertNoHypothesesOn(ctx.db, access, { region: regionKey, process: processKey }, `the template of process "${processKey}" in region "${regionKey}"`, 'Remove those hypotheses, or replace them without this template, first.');
  await refuseIfMultiplied(ctx.db, access, { region: regionKey, process: processKey }, `the template of process "${processKey}" in region "${regionKey}"`, 'Parameters of interest are set by importing a model file: import one without this template into a new analysis.');
  await ctx.db.transaction(async (tx) => {
    await deleteTemplateRow(tx, t.id);
    await modelRevision(tx, access, 'template.deleted', `Removed the template of process "${processKey}" in region "${regionKey}".`, { nominal: t.nominal });
  });
}

/** A CSV of templates or observed counts: previewed (save = false) or saved in one transaction. */
export async function uploadModelCsv(ctx: AppContext, access: Access, kindRaw: unknown, file: Express.Multer.File | undefined, save: boolean, baseUrl = ''): Promise<ModelUploadResult> {
  const kind = modelCsvKindSchema.parse(kindRaw);
  const upload = readUpload(file);
  const model = indexModel(await loadModelRows(ctx.db, access.analysis.id));
  if (kind === 'templates') {
    const changes = readTemplatesCsv(upload.text, upload.filename, model);
    const notices: StaleNotice[] = [];
    if (save)
      await ctx.db.transaction(async (tx) => {
        for (const c of changes) {
          const regionId = model.regions.get(c.region)!.id;
          const processId = model.processes.get(c.process)!.id;
          const old = model.template(c.region, c.process);
          await saveTemplate(tx, old?.id ?? null, { analysisId: access.analysis.id, regionId, processId, nominal: c.nominal, variance: c.variance, floatingNormId: old?.floatingNormId ?? null });
          notices.push(...(await markStaleEffects(tx, access, { regionId, processId, region: c.region, process: c.process, before: old?.nominal ?? null, after: c.nominal })));
        }
        await modelRevision(tx, access, 'templates.uploaded', `Uploaded "${upload.filename}" (SHA-256 ${upload.sha256.slice(0, 12)}…): ${changes.length} template${changes.length === 1 ? '' : 's'}.`, undefined, {
          sha256: upload.sha256,
          templates: changes.map((c) => `${c.region}/${c.process}`),
        });
      });
    await notifyStale(ctx, access, notices, baseUrl);
    return { saved: save, kind, changes: changes.map((c) => ({ region: c.region, process: c.process, bins: c.nominal.length, total: c.nominal.reduce((a, b) => a + b, 0) })) };
  }
  const changes = readObservedCsv(upload.text, upload.filename, model);
  if (save)
    await ctx.db.transaction(async (tx) => {
      for (const c of changes) await updateRegionRow(tx, model.regions.get(c.region)!.id, { observed: c.counts });
      await modelRevision(tx, access, 'data.uploaded', `Uploaded observed data "${upload.filename}" (SHA-256 ${upload.sha256.slice(0, 12)}…) for ${changes.map((c) => c.region).join(', ')}.`);
    });
  // a blinded signal region's totals are not echoed back
  return {
    saved: save,
    kind,
    changes: changes.map((c) => ({ region: c.region, process: null, bins: c.counts.length, total: isWithheld(access.analysis, model.regions.get(c.region)!) ? null : c.counts.reduce((a, b) => a + b, 0) })),
  };
}

