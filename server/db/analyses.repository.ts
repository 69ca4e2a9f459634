import { and, asc, count, eq, inArray, sql } from 'drizzle-orm';
import type { MemberRole } from '@shared/permissions';
import { untilNotified } from '../cache/change-notices';
import type { Db } from './client';
import { analyses, entries, memberships, users } from './schema';

export type AnalysisRow = typeof analyses.$inferSelect;

/**
 * Every request asks who the caller is in an analysis; the embedded database answers one query at
 * a time, so answers are kept in memory until the database announces a change to analyses or
 * memberships (triggers in drizzle/0003; see announcements.ts). No writer has to remember it.
 */
const accessCopies = (db: Db) =>
  untilNotified(
    db.$client,
    'access_changed',
    () => new Map<string, ReturnType<typeof readAnalysisAccess>>(),
    (copies) => copies.clear(),
  );

export async function findAnalysisAccess(db: Db, slug: string, userId: number) {
  const copies = await accessCopies(db);
  const key = `${slug}\u0000${userId}`;
  let copy = copies.get(key);
  if (!copy) {
    // kept before it is read, so that a change announced meanwhile drops it too
    if (copies.size > 10_000) copies.clear();
    copy = readAnalysisAccess(db, slug, userId);
    copies.set(key, copy);
    copy.catch(() => copies.get(key) === copy && copies.delete(key));
  }
  return copy;
}

async function readAnalysisAccess(db: Db, slug: string, userId: number) {
  const [row] = await db
    .select({ analysis: analyses, role: memberships.role })
    .from(analyses)
    .leftJoin(memberships, and(eq(memberships.analysisId, analyses.id), eq(memberships.userId, userId)))
    .where(eq(analyses.slug, slug));
  return row ? { analysis: row.analysis, role: (row.role ?? null) as MemberRole | null } : undefined;
}

/** Analyses the user may see (every one for an admin), with the user's role and a few counts. */
export async function listAnalysesFor(db: Db, userId: number, isAdmin: boolean) {
  const rows = await db
    .select({
      analysis: analyses,
      role: memberships.role,
      entries: sql<number>`(select count(*)::int from ${entries} where ${entries.analysisId} = ${analyses.id})`,
      members: sql<number>`(select count(*)::int from ${memberships} m where m.analysis_id = ${analyses.id})`,
    })
    .from(analyses)
    .leftJoin(memberships, and(eq(memberships.analysisId, analyses.id), eq(memberships.userId, userId)))
    .orderBy(asc(analyses.name));
  return rows.filter((r) => isAdmin || r.role !== null);
}

export async function insertAnalysis(db: Db, values: typeof analyses.$inferInsert) {
  const [row] = await db.insert(analyses).values(values).returning();
  return row;
}

export const listMembers = (db: Db, analysisId: number) =>
  db
    .select({ userId: users.id, email: users.email, name: users.name, role: memberships.role, since: memberships.createdAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.analysisId, analysisId))
    .orderBy(asc(users.name));

export async function countConveners(db: Db, analysisId: number) {
  const [row] = await db
    .select({ n: count() })
    .from(memberships)
    .where(and(eq(memberships.analysisId, analysisId), eq(memberships.role, 'convener')));
  return row.n;
}

export const membershipsOf = (db: Db, userId: number) =>
  db
    .select({ slug: analyses.slug, name: analyses.name, role: memberships.role })
    .from(memberships)
    .innerJoin(analyses, eq(analyses.id, memberships.analysisId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(analyses.name));

/** E-mail addresses of the members who hold one of these roles. */
export async function memberEmails(db: Db, analysisId: number, roles: MemberRole[]) {
  const rows = await db
    .select({ email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.analysisId, analysisId), inArray(memberships.role, roles)));
  return rows.map((r) => r.email);
}
