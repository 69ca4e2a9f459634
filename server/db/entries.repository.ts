import { and, eq } from 'drizzle-orm';
import { notFound } from '../errors';
import type { DbOrTx } from './revisions.repository';
import { effects, entries, groups, memberships, uploads, users } from './schema';

export type EntryRow = typeof entries.$inferSelect;
export type EffectRow = typeof effects.$inferSelect;

/** The register entry `key` of an analysis, or a 404 naming it. */
export async function findEntry(db: DbOrTx, analysisId: number, key: string): Promise<EntryRow> {
  const [entry] = await db.select().from(entries).where(and(eq(entries.analysisId, analysisId), eq(entries.key, key)));
  if (!entry) throw notFound(`Register entry "${key}"`);
  return entry;
}

export async function entryExists(db: DbOrTx, analysisId: number, key: string) {
  const [row] = await db.select({ id: entries.id }).from(entries).where(and(eq(entries.analysisId, analysisId), eq(entries.key, key)));
  return !!row;
}

/** An entry's key and its owner's name, or undefined when the analysis has no such entry. */
export async function entryWithOwner(db: DbOrTx, analysisId: number, key: string) {
  const [entry] = await db
    .select({ key: entries.key, owner: users.name })
    .from(entries)
    .leftJoin(users, eq(users.id, entries.ownerId))
    .where(and(eq(entries.analysisId, analysisId), eq(entries.key, key)));
  return entry;
}

/** An entry with its owner and group, as its page shows them. */
export async function entryForPage(db: DbOrTx, analysisId: number, key: string) {
  const [row] = await db
    .select({ entry: entries, owner: { id: users.id, name: users.name, email: users.email }, group: groups.name })
    .from(entries)
    .leftJoin(users, eq(users.id, entries.ownerId))
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .where(and(eq(entries.analysisId, analysisId), eq(entries.key, key)));
  return row;
}

/** An entry's effects with the upload each came from, in the order they were written. */
export const effectsWithUploads = (db: DbOrTx, entryId: number) =>
  db
    .select({ effect: effects, upload: { id: uploads.id, filename: uploads.filename, sha256: uploads.sha256, createdAt: uploads.createdAt } })
    .from(effects)
    .leftJoin(uploads, eq(uploads.id, effects.uploadId))
    .where(eq(effects.entryId, entryId))
    .orderBy(effects.id);

export const effectsOf = (db: DbOrTx, entryId: number) => db.select().from(effects).where(eq(effects.entryId, entryId));

export async function findEffect(db: DbOrTx, entryId: number, effectId: number) {
  const [effect] = await db.select().from(effects).where(and(eq(effects.id, effectId), eq(effects.entryId, entryId)));
  return effect;
}

export async function groupName(db: DbOrTx, id: number | null) {
  if (!id) return null;
  const [g] = await db.select({ name: groups.name }).from(groups).where(eq(groups.id, id));
  return g?.name ?? null;
}

export async function isMember(db: DbOrTx, analysisId: number, userId: number) {
  const [m] = await db.select({ userId: memberships.userId }).from(memberships).where(and(eq(memberships.analysisId, analysisId), eq(memberships.userId, userId)));
  return !!m;
}

export async function insertEntry(db: DbOrTx, values: typeof entries.$inferInsert) {
  const [entry] = await db.insert(entries).values(values).returning();
  return entry;
}

export async function updateEntryRow(db: DbOrTx, id: number, values: Partial<typeof entries.$inferInsert>) {
  const [after] = await db.update(entries).set(values).where(eq(entries.id, id)).returning();
  return after;
}

/** Keeps an uploaded file for provenance; returns its id. */
export async function insertUpload(db: DbOrTx, values: typeof uploads.$inferInsert) {
  const [stored] = await db.insert(uploads).values(values).returning({ id: uploads.id });
  return stored.id;
}

/** Writes an effect in place of the entry's effect of the same kind on the same template. */
export async function replaceEffect(db: DbOrTx, values: typeof effects.$inferInsert) {
  await db
    .delete(effects)
    .where(and(eq(effects.entryId, values.entryId), eq(effects.regionId, values.regionId), eq(effects.processId, values.processId), eq(effects.kind, values.kind)));
  await db.insert(effects).values(values);
}

export async function deleteEffectRow(db: DbOrTx, id: number) {
  await db.delete(effects).where(eq(effects.id, id));
}

export async function updateEffectRow(db: DbOrTx, id: number, values: Partial<typeof effects.$inferInsert>) {
  await db.update(effects).set(values).where(eq(effects.id, id));
}
