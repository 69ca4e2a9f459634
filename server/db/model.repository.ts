import { asc, eq } from 'drizzle-orm';
import { untilModelChanges } from '../cache/change-notices';
import type { Db, DbClient } from './client';
import type { DbOrTx } from './revisions.repository';
import { floatingNorms, parametersOfInterest, processes, regions, templates } from './schema';

/** The binned model of one analysis, as rows (observed counts included: callers apply blinding), with its parameters of interest besides μ. */
export async function loadModelRows(db: DbOrTx, analysisId: number) {
  const [regionRows, processRows, normRows, poiRows, templateRows] = await Promise.all([
    db.select().from(regions).where(eq(regions.analysisId, analysisId)).orderBy(asc(regions.position), asc(regions.id)),
    db.select().from(processes).where(eq(processes.analysisId, analysisId)).orderBy(asc(processes.position), asc(processes.id)),
    db.select().from(floatingNorms).where(eq(floatingNorms.analysisId, analysisId)).orderBy(asc(floatingNorms.id)),
    db.select().from(parametersOfInterest).where(eq(parametersOfInterest.analysisId, analysisId)).orderBy(asc(parametersOfInterest.position), asc(parametersOfInterest.id)),
    db.select().from(templates).where(eq(templates.analysisId, analysisId)).orderBy(asc(templates.id)),
  ]);
  return { regions: regionRows, processes: processRows, floatingNorms: normRows, parametersOfInterest: poiRows, templates: templateRows };
}
export type ModelRows = Awaited<ReturnType<typeof loadModelRows>>;

/**
 * Copies that depend on an analysis's model (its regions, processes, floating normalisations,
 * parameters of interest, templates and effects) live until the database announces a change to them: triggers in
 * drizzle/0005 (and 0020, parameters of interest) notify "model_changed" at commit.
 */

/** The model rows as last read, for views (never inside a transaction that writes): shared, not to be changed. */
export const cachedModelRows = (ctx: { db: Db; client: DbClient }, analysisId: number) => untilModelChanges(ctx.client, analysisId, 'rows', () => loadModelRows(ctx.db, analysisId));
export const cachedModelIndex = (ctx: { db: Db; client: DbClient }, analysisId: number) =>
  untilModelChanges(ctx.client, analysisId, 'index', async () => indexModel(await cachedModelRows(ctx, analysisId)));

/** Look-ups by key over a model's rows, for validating uploads and building views. */
export function indexModel(rows: ModelRows) {
  const regions = new Map(rows.regions.map((r) => [r.key, r]));
  const processes = new Map(rows.processes.map((p) => [p.key, p]));
  const regionById = new Map(rows.regions.map((r) => [r.id, r]));
  const processById = new Map(rows.processes.map((p) => [p.id, p]));
  const templates = new Map(rows.templates.map((t) => [`${regionById.get(t.regionId)!.key}/${processById.get(t.processId)!.key}`, t]));
  return {
    rows,
    regions,
    processes,
    regionById,
    processById,
    template: (region: string, process: string) => templates.get(`${region}/${process}`),
    bins: (region: string) => regions.get(region)!.edges.length - 1,
  };
}
export type ModelIndex = ReturnType<typeof indexModel>;
