import { and, desc, eq, getTableColumns, sql } from 'drizzle-orm';
import type { FitResult } from '@shared/schemas/fit';
import type { FitPart, FitPartName } from '@shared/schemas/fits';
import type { Db } from './client';
import { fits, modelVersions, users } from './schema';

export type FitRow = Omit<typeof fits.$inferSelect, 'result'>;

// every column but the result, which can be megabytes: lists and summaries never read it
const { result: _result, ...summaryColumns } = getTableColumns(fits);
const fitRows = (db: Db, analysisId: number) =>
  db
    .select({ fit: summaryColumns, version: modelVersions.number, by: users.name })
    .from(fits)
    .innerJoin(modelVersions, eq(modelVersions.id, fits.modelVersionId))
    .leftJoin(users, eq(users.id, fits.createdById))
    .where(eq(fits.analysisId, analysisId))
    .$dynamic();

/** The fits of an analysis, newest first, with their version number and author, without results. */
export const listFitRows = (db: Db, analysisId: number) => fitRows(db, analysisId).orderBy(desc(fits.id));

export async function findFitRow(db: Db, analysisId: number, id: number) {
  const [row] = await fitRows(db, analysisId).where(and(eq(fits.analysisId, analysisId), eq(fits.id, id)));
  return row;
}

export async function insertFit(db: Db, values: typeof fits.$inferInsert) {
  const [fit] = await db.insert(fits).values(values).returning();
  return fit;
}

export async function storedResult(db: Db, id: number) {
  const [row] = await db.select({ result: fits.result }).from(fits).where(eq(fits.id, id));
  return (row?.result ?? null) as FitResult | null;
}

/** A stored result without its two largest parts (the database leaves them out, not this process). */
export type StoredHead = Omit<FitResult, 'correlation' | 'information'>;
export async function storedHead(db: Db, id: number) {
  const [row] = await db.select({ head: sql<StoredHead | null>`${fits.result} - 'correlation' - 'information'` }).from(fits).where(eq(fits.id, id));
  return row?.head ?? null;
}

/** One large part of a stored result, read alone; `stored` is false when the fit has no result. */
export async function storedPart<K extends FitPartName>(db: Db, id: number, part: K) {
  const path = part === 'gammas' ? ['gammas', 'list'] : [part];
  const [row] = await db
    .select({ stored: sql<boolean>`${fits.result} is not null`, part: sql<FitPart<K> | null>`${fits.result} #> ${`{${path.join(',')}}`}::text[]` })
    .from(fits)
    .where(eq(fits.id, id));
  return { stored: !!row?.stored, part: row?.part ?? null };
}

/** The frozen model of a version, by the version's row id. */
export async function versionModel(db: Db, versionId: number) {
  const [version] = await db.select({ model: modelVersions.model }).from(modelVersions).where(eq(modelVersions.id, versionId));
  return version?.model;
}
