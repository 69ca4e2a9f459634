import { and, desc, eq } from 'drizzle-orm';
import type { Db } from './client';
import { hypothesisScans, modelVersions, users } from './schema';

export type HypothesisScanRow = typeof hypothesisScans.$inferSelect;

/** The scans of one analysis, newest first, with their author and version number (a result is a few kilobytes). */
export const listHypothesisScanRows = (db: Db, analysisId: number) =>
  db
    .select({ scan: hypothesisScans, by: users.name, version: modelVersions.number })
    .from(hypothesisScans)
    .innerJoin(modelVersions, eq(modelVersions.id, hypothesisScans.modelVersionId))
    .leftJoin(users, eq(users.id, hypothesisScans.createdById))
    .where(eq(hypothesisScans.analysisId, analysisId))
    .orderBy(desc(hypothesisScans.id));

export async function findHypothesisScanRow(db: Db, analysisId: number, id: number) {
  const [row] = await db
    .select({ scan: hypothesisScans, by: users.name, version: modelVersions.number })
    .from(hypothesisScans)
    .innerJoin(modelVersions, eq(modelVersions.id, hypothesisScans.modelVersionId))
    .leftJoin(users, eq(users.id, hypothesisScans.createdById))
    .where(and(eq(hypothesisScans.analysisId, analysisId), eq(hypothesisScans.id, id)));
  return row;
}

export async function insertHypothesisScan(db: Db, values: typeof hypothesisScans.$inferInsert) {
  const [row] = await db.insert(hypothesisScans).values(values).returning();
  return row;
}

/** A scan with the model of its version, for the runner. */
export async function hypothesisScanInput(db: Db, id: number) {
  const [row] = await db
    .select({ scan: hypothesisScans, model: modelVersions.model })
    .from(hypothesisScans)
    .innerJoin(modelVersions, eq(modelVersions.id, hypothesisScans.modelVersionId))
    .where(eq(hypothesisScans.id, id));
  return row;
}
