import { and, desc, eq, getTableColumns } from 'drizzle-orm';
import type { Db } from './client';
import { toyRuns, users } from './schema';

export type ToyRow = typeof toyRuns.$inferSelect;

const { summary: _summary, ...listColumns } = getTableColumns(toyRuns);

/** The toy runs of one fit, newest first, with their author, without their summaries. */
export const listToyRows = (db: Db, analysisId: number, fitId: number) =>
  db
    .select({ run: listColumns, by: users.name })
    .from(toyRuns)
    .leftJoin(users, eq(users.id, toyRuns.createdById))
    .where(and(eq(toyRuns.analysisId, analysisId), eq(toyRuns.fitId, fitId)))
    .orderBy(desc(toyRuns.id));

export async function findToyRow(db: Db, analysisId: number, id: number) {
  const [row] = await db
    .select({ run: toyRuns, by: users.name })
    .from(toyRuns)
    .leftJoin(users, eq(users.id, toyRuns.createdById))
    .where(and(eq(toyRuns.analysisId, analysisId), eq(toyRuns.id, id)));
  return row;
}

export async function insertToyRun(db: Db, values: typeof toyRuns.$inferInsert) {
  const [row] = await db.insert(toyRuns).values(values).returning();
  return row;
}
