import { and, asc, eq, max } from 'drizzle-orm';
import { groupInputSchema, moveEntrySchema, type GroupsView } from '@shared/schemas/register';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findEntry } from '../db/entries.repository';
import { addRevision, type DbOrTx } from '../db/revisions.repository';
import { entries, groups } from '../db/schema';
import { conflict, notFound } from '../errors';

/** Groups of register entries (jets, leptons, theory…): the grouped impacts use them. */

export async function groupsView(db: DbOrTx, analysisId: number): Promise<GroupsView> {
  const groupRows = await db.select().from(groups).where(eq(groups.analysisId, analysisId)).orderBy(asc(groups.position), asc(groups.id));
  const entryRows = await db
    .select({ key: entries.key, groupId: entries.groupId })
    .from(entries)
    .where(eq(entries.analysisId, analysisId))
    .orderBy(asc(entries.key));
  return {
    groups: groupRows.map((g) => ({ id: g.id, name: g.name, position: g.position, entries: entryRows.filter((e) => e.groupId === g.id).map((e) => e.key) })),
    ungrouped: entryRows.filter((e) => e.groupId === null).map((e) => e.key),
  };
}

/** The id of the group with this name, created when missing. */
export async function groupIdFor(db: DbOrTx, analysisId: number, name: string | null): Promise<number | null> {
  if (!name) return null;
  const [found] = await db.select({ id: groups.id }).from(groups).where(and(eq(groups.analysisId, analysisId), eq(groups.name, name)));
  if (found) return found.id;
  const [{ top }] = await db.select({ top: max(groups.position) }).from(groups).where(eq(groups.analysisId, analysisId));
  const [created] = await db.insert(groups).values({ analysisId, name, position: (top ?? -1) + 1 }).returning({ id: groups.id });
  return created.id;
}

async function findGroup(ctx: AppContext, access: Access, id: number) {
  const [g] = await ctx.db.select().from(groups).where(and(eq(groups.id, id), eq(groups.analysisId, access.analysis.id)));
  if (!g) throw notFound(`Group ${id}`);
  return g;
}

async function assertNameFree(ctx: AppContext, access: Access, name: string, except?: number) {
  const [g] = await ctx.db.select({ id: groups.id }).from(groups).where(and(eq(groups.analysisId, access.analysis.id), eq(groups.name, name)));
  if (g && g.id !== except) throw conflict(`A group named "${name}" already exists.`);
}

export async function createGroup(ctx: AppContext, access: Access, body: unknown) {
  const { name } = groupInputSchema.parse(body);
  await assertNameFree(ctx, access, name);
  const id = await groupIdFor(ctx.db, access.analysis.id, name);
  return (await groupsView(ctx.db, access.analysis.id)).groups.find((g) => g.id === id)!;
}

export async function renameGroup(ctx: AppContext, access: Access, id: number, body: unknown) {
  const { name } = groupInputSchema.parse(body);
  await findGroup(ctx, access, id);
  await assertNameFree(ctx, access, name, id);
  await ctx.db.update(groups).set({ name }).where(eq(groups.id, id));
  return (await groupsView(ctx.db, access.analysis.id)).groups.find((g) => g.id === id)!;
}

/** Deleting a group leaves its entries ungrouped; nothing else changes. */
export async function deleteGroup(ctx: AppContext, access: Access, id: number) {
  await findGroup(ctx, access, id);
  await ctx.db.delete(groups).where(eq(groups.id, id));
}

export async function moveEntry(ctx: AppContext, access: Access, key: string, body: unknown): Promise<GroupsView> {
  const { groupId } = moveEntrySchema.parse(body);
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  const before = entry.groupId ? (await findGroup(ctx, access, entry.groupId)).name : null;
  const after = groupId ? (await findGroup(ctx, access, groupId)).name : null;
  if (entry.groupId !== groupId)
    await ctx.db.transaction(async (tx) => {
      await tx.update(entries).set({ groupId, version: entry.version + 1, updatedAt: new Date() }).where(eq(entries.id, entry.id));
      await addRevision(tx, {
        analysisId: access.analysis.id,
        entryId: entry.id,
        authorId: access.userId,
        action: 'group.changed',
        summary: `Moved from ${before ? `"${before}"` : 'no group'} to ${after ? `"${after}"` : 'no group'}.`,
        before: { group: before },
        after: { group: after },
      });
    });
  return groupsView(ctx.db, access.analysis.id);
}
