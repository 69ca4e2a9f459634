import { promisify } from 'node:util';
import { gunzip } from 'node:zlib';
import { and, desc, eq, getTableColumns, sql } from 'drizzle-orm';
import type { FitResult } from '@shared/schemas/fit';
import type { FitPart, FitPartName } from '@shared/schemas/fits';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { fitParts, fits, modelVersions, users } from './schema';

export type FitRow = Omit<typeof fits.$inferSelect, 'result'>;

const gunzipAsync = promisify(gunzip);

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

export async function insertFit(db: DbOrTx, values: typeof fits.$inferInsert) {
  const [fit] = await db.insert(fits).values(values).returning();
  return fit;
}

/**
 * A result is stored in two places: fits.result holds all of it but the correlation matrix and
 * the per-bin information, which are fit_parts rows of JSON bytes (gzip where the fit ran).
 */
export type StoredHead = Omit<FitResult, LargePart>;
type LargePart = 'correlation' | 'information';
const isLarge = (part: string): part is LargePart => part === 'correlation' || part === 'information';

export async function storeFitParts(db: Db, id: number, parts: Record<LargePart, Uint8Array>) {
  await db.transaction(async (tx) => {
    await tx.delete(fitParts).where(eq(fitParts.fitId, id));
    await tx.insert(fitParts).values(Object.entries(parts).map(([part, data]) => ({ fitId: id, part, encoding: 'gzip', data: Buffer.from(data) })));
  });
}

export async function dropFitParts(db: Db, id: number) {
  await db.delete(fitParts).where(eq(fitParts.fitId, id));
}

/** A stored result without its two largest parts. */
export async function storedHead(db: Db, id: number) {
  const [row] = await db.select({ head: fits.result }).from(fits).where(eq(fits.id, id));
  return (row?.head ?? null) as StoredHead | null;
}

/** The bytes of a large part as stored, with their encoding; undefined when there are none. */
export async function storedPartBytes(db: Db, id: number, part: LargePart) {
  const [row] = await db.select({ encoding: fitParts.encoding, data: fitParts.data }).from(fitParts).where(and(eq(fitParts.fitId, id), eq(fitParts.part, part)));
  return row as { encoding: 'gzip' | 'identity'; data: Buffer } | undefined;
}

/** The JSON text of stored part bytes. */
export async function partText(stored: { encoding: 'gzip' | 'identity'; data: Buffer }) {
  return stored.encoding === 'gzip' ? (await gunzipAsync(stored.data)).toString('utf8') : stored.data.toString('utf8');
}

/** One large part of a stored result, read alone; `stored` is false when the fit has no result. */
export async function storedPart<K extends FitPartName>(db: Db, id: number, part: K): Promise<{ stored: boolean; part: FitPart<K> | null }> {
  if (isLarge(part)) {
    const [row] = await db.select({ stored: sql<boolean>`${fits.result} is not null` }).from(fits).where(eq(fits.id, id));
    const bytes = row?.stored ? await storedPartBytes(db, id, part) : undefined;
    return { stored: !!row?.stored, part: bytes ? (JSON.parse(await partText(bytes)) as FitPart<K>) : null };
  }
  const path = part === 'gammas' ? ['gammas', 'list'] : [part];
  const [row] = await db
    .select({ stored: sql<boolean>`${fits.result} is not null`, part: sql<FitPart<K> | null>`${fits.result} #> ${`{${path.join(',')}}`}::text[]` })
    .from(fits)
    .where(eq(fits.id, id));
  return { stored: !!row?.stored, part: row?.part ?? null };
}

/** The whole stored result, put together again (exports of the whole result). */
export async function storedResult(db: Db, id: number): Promise<FitResult | null> {
  const head = await storedHead(db, id);
  if (!head) return null;
  const [correlation, information] = await Promise.all((['correlation', 'information'] as const).map((p) => storedPart(db, id, p)));
  return { ...head, correlation: correlation.part as FitResult['correlation'], information: (information.part ?? []) as FitResult['information'] };
}

/** The frozen model of a version, by the version's row id. */
export async function versionModel(db: Db, versionId: number) {
  const [version] = await db.select({ model: modelVersions.model }).from(modelVersions).where(eq(modelVersions.id, versionId));
  return version?.model;
}

/** The fits of a review set, in the order they were made. */
export const fitRowsOfSet = (db: Db, analysisId: number, setId: number) => fitRows(db, analysisId).where(and(eq(fits.analysisId, analysisId), eq(fits.reviewSetId, setId))).orderBy(fits.id);

/** The checks run from a parameter's diagnosis in a fit. */
export const checksOf = (db: Db, analysisId: number, fitId: number, parameter: string) =>
  fitRows(db, analysisId).where(and(eq(fits.analysisId, analysisId), eq(fits.checkOfFitId, fitId), eq(fits.checkOfParameter, parameter))).orderBy(fits.id);
