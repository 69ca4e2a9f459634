import { and, asc, eq, max } from 'drizzle-orm';
import type { DbOrTx } from './revisions.repository';
import { entries, groups } from './schema';

/** An analysis's groups in their order, and every entry's key with its group. */
export async function groupsAndEntries(db: DbOrTx, analysisId: number) {
  const groupRows = await db.select().from(groups).where(eq(groups.analysisId, analysisId)).orderBy(asc(groups.position), asc(groups.id));
  const entryRows = await db.select({ key: entries.key, groupId: entries.groupId }).from(entries).where(eq(entries.analysisId, analysisId)).orderBy(asc(entries.key));
  return { groupRows, entryRows };
}

export async function groupById(db: DbOrTx, analysisId: number, id: number) {
  const [g] = await db.select().from(groups).where(and(eq(groups.id, id), eq(groups.analysisId, analysisId)));
  return g;
}

export async function groupByName(db: DbOrTx, analysisId: number, name: string) {
  const [g] = await db.select().from(groups).where(and(eq(groups.analysisId, analysisId), eq(groups.name, name)));
  return g;
}

/** A new group at the end of the list; returns its id. */
export async function insertGroup(db: DbOrTx, analysisId: number, name: string) {
  const [{ top }] = await db.select({ top: max(groups.position) }).from(groups).where(eq(groups.analysisId, analysisId));
  const [created] = await db
    .insert(groups)
    .values({ analysisId, name, position: (top ?? -1) + 1 })
    .returning({ id: groups.id });
  return created.id;
}

export async function renameGroupRow(db: DbOrTx, id: number, name: string) {
  await db.update(groups).set({ name }).where(eq(groups.id, id));
}

export async function deleteGroupRow(db: DbOrTx, id: number) {
  await db.delete(groups).where(eq(groups.id, id));
}
