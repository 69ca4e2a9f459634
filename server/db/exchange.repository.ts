import { and, asc, count, eq, ne } from 'drizzle-orm';
import type { DbOrTx } from './revisions.repository';
import { effects, entries, floatingNorms, groups, parametersOfInterest, processes, regions, templates } from './schema';

/**
 * The bulk reads and writes of the exchange file: a whole model written into an empty analysis
 * in one transaction, and the register read back for an export.
 */
export async function regionCount(db: DbOrTx, analysisId: number) {
  const [{ n }] = await db.select({ n: count() }).from(regions).where(eq(regions.analysisId, analysisId));
  return n;
}
export const insertRegions = (db: DbOrTx, rows: (typeof regions.$inferInsert)[]) => db.insert(regions).values(rows).returning();
export const insertProcesses = (db: DbOrTx, rows: (typeof processes.$inferInsert)[]) => db.insert(processes).values(rows).returning();
export const insertFloatingNorms = async (db: DbOrTx, rows: (typeof floatingNorms.$inferInsert)[]) => (rows.length ? db.insert(floatingNorms).values(rows).returning() : []);
export const insertParametersOfInterest = async (db: DbOrTx, rows: (typeof parametersOfInterest.$inferInsert)[]) => {
  if (rows.length) await db.insert(parametersOfInterest).values(rows);
};
export const insertTemplates = async (db: DbOrTx, rows: (typeof templates.$inferInsert)[]) => {
  if (rows.length) await db.insert(templates).values(rows);
};
export const insertGroups = async (db: DbOrTx, rows: (typeof groups.$inferInsert)[]) => (rows.length ? db.insert(groups).values(rows).returning() : []);
export const insertEffects = async (db: DbOrTx, rows: (typeof effects.$inferInsert)[]) => {
  if (rows.length) await db.insert(effects).values(rows);
};

/** The entries an export carries (retired ones are not part of the fit), with their group names. */
export const exportedEntries = (db: DbOrTx, analysisId: number) =>
  db
    .select({ entry: entries, group: groups.name })
    .from(entries)
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .where(and(eq(entries.analysisId, analysisId), ne(entries.state, 'retired')))
    .orderBy(asc(entries.id));

/** Every effect of the analysis's entries, in the order they were written. */
export const effectsOfAnalysis = (db: DbOrTx, analysisId: number) =>
  db.select().from(effects).innerJoin(entries, eq(entries.id, effects.entryId)).where(eq(entries.analysisId, analysisId)).orderBy(asc(effects.id));
