import { and, asc, count, eq, sql } from 'drizzle-orm';
import type { MemberRole } from '@shared/permissions';
import type { Db } from './client';
import { analyses, entries, memberships, users } from './schema';

export type AnalysisRow = typeof analyses.$inferSelect;

/**
 * Every request asks who the caller is in an analysis; the embedded database answers one query at
 * a time, so answers are kept in memory until a membership or analysis changes (forgetAccess,
 * called by every writer of those tables) and for at most 5 seconds.
 */
const accessCopies = new WeakMap<Db, Map<string, { value: Awaited<ReturnType<typeof readAnalysisAccess>>; until: number }>>();
export function forgetAccess(db: Db) {
  accessCopies.get(db)?.clear();
}
export async function findAnalysisAccess(db: Db, slug: string, userId: number) {
  let copies = accessCopies.get(db);
  if (!copies) accessCopies.set(db, (copies = new Map()));
  const key = `${slug}\u0000${userId}`;
  const copy = copies.get(key);
  if (copy && copy.until > Date.now()) return copy.value;
  const value = await readAnalysisAccess(db, slug, userId);
  if (copies.size > 10_000) copies.clear();
  copies.set(key, { value, until: Date.now() + 5000 });
  return value;
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
  forgetAccess(db);
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
