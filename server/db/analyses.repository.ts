import { and, asc, count, desc, eq, inArray, sql } from 'drizzle-orm';
import type { MemberRole } from '@shared/permissions';
import { untilNotified } from '../cache/change-notices';
import type { Db } from './client';
import { analyses, entries, fits, memberships, modelVersions, processes, questions, regions, users } from './schema';

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

export async function analysisBySlug(db: Db, slug: string) {
  const [a] = await db.select().from(analyses).where(eq(analyses.slug, slug));
  return a;
}

/** What the overview counts and shows: rows per table, entries by state, the newest version and fit, open questions. */
export async function overviewFacts(db: Db, analysisId: number) {
  const countIn = async (table: typeof regions | typeof processes | typeof memberships) => (await db.select({ n: count() }).from(table).where(eq(table.analysisId, analysisId)))[0].n;
  const byState = await db.select({ state: entries.state, n: count() }).from(entries).where(eq(entries.analysisId, analysisId)).groupBy(entries.state);
  const [version] = await db
    .select({ number: modelVersions.number, createdAt: modelVersions.createdAt, note: modelVersions.note })
    .from(modelVersions)
    .where(eq(modelVersions.analysisId, analysisId))
    .orderBy(desc(modelVersions.number))
    .limit(1);
  const [fit] = await db.select({ id: fits.id, state: fits.state, label: fits.label, createdAt: fits.createdAt }).from(fits).where(eq(fits.analysisId, analysisId)).orderBy(desc(fits.id)).limit(1);
  const [open] = await db
    .select({ n: count() })
    .from(questions)
    .where(and(eq(questions.analysisId, analysisId), eq(questions.state, 'open')));
  return { regions: await countIn(regions), processes: await countIn(processes), members: await countIn(memberships), byState, version, fit, openQuestions: open.n };
}
