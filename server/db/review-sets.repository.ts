import { and, desc, eq } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { modelVersions, reviewSets, users } from './schema';

export type ReviewSetRow = typeof reviewSets.$inferSelect;

const setRows = (db: Db, analysisId: number) =>
  db
    .select({ set: reviewSets, version: modelVersions.number, by: users.name })
    .from(reviewSets)
    .innerJoin(modelVersions, eq(modelVersions.id, reviewSets.modelVersionId))
    .leftJoin(users, eq(users.id, reviewSets.createdById))
    .where(eq(reviewSets.analysisId, analysisId))
    .$dynamic();

export const listReviewSetRows = (db: Db, analysisId: number) => setRows(db, analysisId).orderBy(desc(reviewSets.id));

export async function findReviewSetRow(db: Db, analysisId: number, id: number) {
  const [row] = await setRows(db, analysisId).where(and(eq(reviewSets.analysisId, analysisId), eq(reviewSets.id, id)));
  return row;
}

export async function insertReviewSet(db: DbOrTx, values: typeof reviewSets.$inferInsert) {
  const [row] = await db.insert(reviewSets).values(values).returning();
  return row;
}
