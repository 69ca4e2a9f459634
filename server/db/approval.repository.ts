import { and, asc, desc, eq, inArray, ne, sql } from 'drizzle-orm';
import type { DbOrTx } from './revisions.repository';
import { entries, fits, hypothesisScans, modelVersions, questions } from './schema';

/** Every entry that is not retired: key, label, review state and revision number, by key. */
export const activeEntries = (db: DbOrTx, analysisId: number) =>
  db
    .select({ key: entries.key, label: entries.label, state: entries.state, revision: entries.version })
    .from(entries)
    .where(and(eq(entries.analysisId, analysisId), ne(entries.state, 'retired')))
    .orderBy(asc(entries.key));

/** Questions with their entry's key and state (every state), oldest first. */
export const questionsWithEntry = (db: DbOrTx, analysisId: number) =>
  db
    .select({ id: questions.id, title: questions.title, state: questions.state, entry: entries.key })
    .from(questions)
    .innerJoin(entries, eq(entries.id, questions.entryId))
    .where(eq(questions.analysisId, analysisId))
    .orderBy(asc(questions.id));

/** The newest frozen version of an analysis (number and row id), if any. */
export async function latestVersion(db: DbOrTx, analysisId: number) {
  const [v] = await db.select({ id: modelVersions.id, number: modelVersions.number }).from(modelVersions).where(eq(modelVersions.analysisId, analysisId)).orderBy(desc(modelVersions.number)).limit(1);
  return v;
}

/** The succeeded fits of a version, newest first, with their options and whether they converged (not their results, which can be megabytes). */
export const succeededFitsOf = (db: DbOrTx, versionId: number) =>
  db
    .select({ id: fits.id, options: fits.options, converged: sql<boolean>`coalesce(${fits.result}->>'status' = 'converged', false)` })
    .from(fits)
    .where(and(eq(fits.modelVersionId, versionId), eq(fits.state, 'succeeded')))
    .orderBy(desc(fits.id));

/** One fit's nuisance rows (name, pull, held), read out of its stored result. */
export async function nuisanceOf(db: DbOrTx, fitId: number) {
  const [row] = await db.select({ nuisance: sql<{ name: string; pull: number; fixed: boolean }[] | null>`${fits.result}->'nuisance'` }).from(fits).where(eq(fits.id, fitId));
  return row?.nuisance ?? [];
}

/** The succeeded scans over signal hypotheses of a version, with their options. */
export const succeededScansOf = (db: DbOrTx, versionId: number) =>
  db.select({ id: hypothesisScans.id, options: hypothesisScans.options }).from(hypothesisScans).where(and(eq(hypothesisScans.modelVersionId, versionId), inArray(hypothesisScans.state, ['succeeded'])));
