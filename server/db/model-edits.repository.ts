import { and, asc, count, eq, max, sql } from 'drizzle-orm';
import type { DbOrTx } from './revisions.repository';
import { effects, floatingNorms, parametersOfInterest, processes, regions, templates } from './schema';

/**
 * The writes of the model editor and the look-ups they need: one region, process, floating
 * normalisation or template by key, inserts at the end of the list, and the counts that decide
 * whether something may be removed.
 */
export type RegionRow = typeof regions.$inferSelect;
export type ProcessRow = typeof processes.$inferSelect;

export async function regionByKey(db: DbOrTx, analysisId: number, key: string) {
  const [r] = await db.select().from(regions).where(and(eq(regions.analysisId, analysisId), eq(regions.key, key)));
  return r;
}
export async function processByKey(db: DbOrTx, analysisId: number, key: string) {
  const [p] = await db.select().from(processes).where(and(eq(processes.analysisId, analysisId), eq(processes.key, key)));
  return p;
}
export async function floatingNormByKey(db: DbOrTx, analysisId: number, key: string) {
  const [f] = await db.select().from(floatingNorms).where(and(eq(floatingNorms.analysisId, analysisId), eq(floatingNorms.key, key)));
  return f;
}
export async function templateOf(db: DbOrTx, regionId: number, processId: number) {
  const [t] = await db.select().from(templates).where(and(eq(templates.regionId, regionId), eq(templates.processId, processId)));
  return t;
}

/** Register effects that vary templates of this region, this process, or this one template. */
export async function countEffects(db: DbOrTx, on: { regionId?: number; processId?: number }) {
  const where = and(on.regionId !== undefined ? eq(effects.regionId, on.regionId) : undefined, on.processId !== undefined ? eq(effects.processId, on.processId) : undefined);
  const [{ n }] = await db.select({ n: count() }).from(effects).where(where);
  return n;
}
/** Keys of the parameters of interest that multiply a template of this region, of this process, or this one template. */
export async function parametersOfInterestUsing(db: DbOrTx, analysisId: number, on: { region?: string; process?: string }) {
  const target = { ...(on.region !== undefined ? { region: on.region } : {}), ...(on.process !== undefined ? { process: on.process } : {}) };
  const rows = await db
    .select({ key: parametersOfInterest.key })
    .from(parametersOfInterest)
    .where(and(eq(parametersOfInterest.analysisId, analysisId), sql`${parametersOfInterest.targets} @> ${JSON.stringify([target])}::jsonb`))
    .orderBy(asc(parametersOfInterest.position), asc(parametersOfInterest.id));
  return rows.map((r) => r.key);
}
export async function countTemplatesOfRegion(db: DbOrTx, regionId: number) {
  const [{ n }] = await db.select({ n: count() }).from(templates).where(eq(templates.regionId, regionId));
  return n;
}

export async function insertRegion(db: DbOrTx, values: Omit<typeof regions.$inferInsert, 'position'>) {
  const [{ top }] = await db.select({ top: max(regions.position) }).from(regions).where(eq(regions.analysisId, values.analysisId));
  const [r] = await db
    .insert(regions)
    .values({ ...values, position: (top ?? -1) + 1 })
    .returning();
  return r;
}
export async function updateRegionRow(db: DbOrTx, id: number, values: Partial<typeof regions.$inferInsert>) {
  const [r] = await db.update(regions).set(values).where(eq(regions.id, id)).returning();
  return r;
}
export async function deleteRegionRow(db: DbOrTx, id: number) {
  await db.delete(regions).where(eq(regions.id, id));
}

export async function insertProcess(db: DbOrTx, values: Omit<typeof processes.$inferInsert, 'position'>) {
  const [{ top }] = await db.select({ top: max(processes.position) }).from(processes).where(eq(processes.analysisId, values.analysisId));
  const [p] = await db
    .insert(processes)
    .values({ ...values, position: (top ?? -1) + 1 })
    .returning();
  return p;
}
export async function updateProcessRow(db: DbOrTx, id: number, values: Partial<typeof processes.$inferInsert>) {
  const [p] = await db.update(processes).set(values).where(eq(processes.id, id)).returning();
  return p;
}
export async function deleteProcessRow(db: DbOrTx, id: number) {
  await db.delete(processes).where(eq(processes.id, id));
}

export async function insertFloatingNorm(db: DbOrTx, values: typeof floatingNorms.$inferInsert) {
  const [f] = await db.insert(floatingNorms).values(values).returning();
  return f;
}
export async function deleteFloatingNormRow(db: DbOrTx, id: number) {
  await db.delete(floatingNorms).where(eq(floatingNorms.id, id));
}

/**
 * Writes a template in place of the one of the same region and process, if any; the flat-shape
 * test of the effects on it, made against the old template, is made again when next read.
 */
export async function saveTemplate(db: DbOrTx, existingId: number | null, values: typeof templates.$inferInsert) {
  if (existingId !== null) await db.update(templates).set({ nominal: values.nominal, variance: values.variance, floatingNormId: values.floatingNormId }).where(eq(templates.id, existingId));
  else await db.insert(templates).values(values);
  await db.update(effects).set({ flatP: -1 }).where(and(eq(effects.regionId, values.regionId), eq(effects.processId, values.processId)));
}
export async function deleteTemplateRow(db: DbOrTx, id: number) {
  await db.delete(templates).where(eq(templates.id, id));
}
