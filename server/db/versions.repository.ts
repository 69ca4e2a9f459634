import { and, desc, eq, max } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { modelVersions, users } from './schema';

export type VersionRow = typeof modelVersions.$inferSelect;

/** The versions of an analysis, newest first, with their author. */
export const listVersionRows = (db: Db, analysisId: number) =>
  db
    .select({ version: modelVersions, by: users.name })
    .from(modelVersions)
    .leftJoin(users, eq(users.id, modelVersions.createdById))
    .where(eq(modelVersions.analysisId, analysisId))
    .orderBy(desc(modelVersions.number));

export async function findVersionRow(db: Db, analysisId: number, number: number) {
  const [v] = await db.select().from(modelVersions).where(and(eq(modelVersions.analysisId, analysisId), eq(modelVersions.number, number)));
  return v;
}

/** Writes the next numbered version (inside the caller's transaction, so numbers never repeat). */
export async function insertNextVersion(tx: DbOrTx, values: Omit<typeof modelVersions.$inferInsert, 'number'>) {
  const [{ top }] = await tx.select({ top: max(modelVersions.number) }).from(modelVersions).where(eq(modelVersions.analysisId, values.analysisId));
  const [v] = await tx
    .insert(modelVersions)
    .values({ ...values, number: (top ?? 0) + 1 })
    .returning();
  return v;
}

export async function findVersionById(db: Db, id: number) {
  const [v] = await db.select().from(modelVersions).where(eq(modelVersions.id, id));
  return v;
}
