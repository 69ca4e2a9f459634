import { groupInputSchema, moveEntrySchema, type GroupsView } from '@shared/schemas/register';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findEntry, updateEntryRow } from '../db/entries.repository';
import { deleteGroupRow, groupById, groupByName, groupsAndEntries, insertGroup, renameGroupRow } from '../db/groups.repository';
import { addRevision, type DbOrTx } from '../db/revisions.repository';
import { conflict, notFound } from '../errors';

/** Groups of register entries (jets, leptons, theory…): the grouped impacts use them. */

export async function groupsView(db: DbOrTx, analysisId: number): Promise<GroupsView> {
  const { groupRows, entryRows } = await groupsAndEntries(db, analysisId);
  return {
    groups: groupRows.map((g) => ({ id: g.id, name: g.name, position: g.position, entries: entryRows.filter((e) => e.groupId === g.id).map((e) => e.key) })),
    ungrouped: entryRows.filter((e) => e.groupId === null).map((e) => e.key),
  };
}

/** The id of the group with this name, created when missing. */
export async function groupIdFor(db: DbOrTx, analysisId: number, name: string | null): Promise<number | null> {
  if (!name) return null;
  const found = await groupByName(db, analysisId, name);
  return found ? found.id : insertGroup(db, analysisId, name);
}

async function findGroup(ctx: AppContext, access: Access, id: number) {
  const g = await groupById(ctx.db, access.analysis.id, id);
  if (!g) throw notFound(`Group ${id}`);
  return g;
}

async function assertNameFree(ctx: AppContext, access: Access, name: string, except?: number) {
  const g = await groupByName(ctx.db, access.analysis.id, name);
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
  await renameGroupRow(ctx.db, id, name);
  return (await groupsView(ctx.db, access.analysis.id)).groups.find((g) => g.id === id)!;
}

/** Deleting a group leaves its entries ungrouped; nothing else changes. */
export async function deleteGroup(ctx: AppContext, access: Access, id: number) {
  await findGroup(ctx, access, id);
  await deleteGroupRow(ctx.db, id);
}

export async function moveEntry(ctx: AppContext, access: Access, key: string, body: unknown): Promise<GroupsView> {
  const { groupId } = moveEntrySchema.parse(body);
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  const before = entry.groupId ? (await findGroup(ctx, access, entry.groupId)).name : null;
  const after = groupId ? (await findGroup(ctx, access, groupId)).name : null;
  if (entry.groupId !== groupId)
    await ctx.db.transaction(async (tx) => {
      await updateEntryRow(tx, entry.id, { groupId, version: entry.version + 1, updatedAt: new Date() });
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
