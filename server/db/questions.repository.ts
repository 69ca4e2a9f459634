import { aliasedTable, and, eq, sql, type SQL } from 'drizzle-orm';
import type { QuestionState } from '@shared/schemas/review';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { answers, entries, fits, groups, modelVersions, questions, regions, users } from './schema';

const author = aliasedTable(users, 'author');
const owner = aliasedTable(users, 'owner');
const resolver = aliasedTable(users, 'resolver');

export type QuestionFilter = { id?: number; state?: QuestionState; owner?: number; group?: string; fit?: number; entry?: string };

/** Questions of an analysis with their entry, people, fit, answer count and last answer time. */
export async function questionRows(db: Db, analysisId: number, f: QuestionFilter) {
  const where: SQL[] = [eq(questions.analysisId, analysisId)];
  if (f.id !== undefined) where.push(eq(questions.id, f.id));
  if (f.state) where.push(eq(questions.state, f.state));
  if (f.owner) where.push(eq(entries.ownerId, f.owner));
  if (f.group) where.push(eq(groups.name, f.group));
  if (f.fit) where.push(eq(questions.fitId, f.fit));
  if (f.entry) where.push(eq(entries.key, f.entry));
  const answerCount = sql<number>`(select count(*)::int from ${answers} where ${answers.questionId} = ${questions.id})`;
  const lastAnswer = sql<Date | null>`(select max(${answers.createdAt}) from ${answers} where ${answers.questionId} = ${questions.id})`;
  return db
    .select({
      q: questions,
      entry: { key: entries.key, label: entries.label, group: groups.name },
      owner: { id: owner.id, name: owner.name },
      author: { id: author.id, name: author.name },
      resolver: { id: resolver.id, name: resolver.name },
      fit: { id: fits.id, label: fits.label },
      version: modelVersions.number,
      answers: answerCount,
      lastAnswer,
    })
    .from(questions)
    .leftJoin(entries, eq(entries.id, questions.entryId))
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .leftJoin(owner, eq(owner.id, entries.ownerId))
    .leftJoin(author, eq(author.id, questions.authorId))
    .leftJoin(resolver, eq(resolver.id, questions.resolvedById))
    .leftJoin(fits, eq(fits.id, questions.fitId))
    .leftJoin(modelVersions, eq(modelVersions.id, questions.versionId))
    .where(and(...where));
}

/** A question's thread, oldest first. */
export const answersOf = (db: Db, questionId: number) =>
  db
    .select({ id: answers.id, body: answers.body, evidence: answers.evidence, createdAt: answers.createdAt, author: { id: users.id, name: users.name } })
    .from(answers)
    .leftJoin(users, eq(users.id, answers.authorId))
    .where(eq(answers.questionId, questionId))
    .orderBy(answers.createdAt, answers.id);

/** A question with the key, label and owner of its entry (null unless it is about a parameter). */
export async function questionWithEntry(db: Db, analysisId: number, id: number) {
  const [row] = await db
    .select({ q: questions, entry: { key: entries.key, label: entries.label, ownerId: entries.ownerId } })
    .from(questions)
    .leftJoin(entries, eq(entries.id, questions.entryId))
    .where(and(eq(questions.id, id), eq(questions.analysisId, analysisId)));
  return row;
}

export async function fitOfAnalysis(db: Db, analysisId: number, id: number) {
  const [fit] = await db
    .select({ id: fits.id, label: fits.label, state: fits.state, options: fits.options, versionNumber: modelVersions.number })
    .from(fits)
    .innerJoin(modelVersions, eq(modelVersions.id, fits.modelVersionId))
    .where(and(eq(fits.analysisId, analysisId), eq(fits.id, id)));
  return fit;
}

/** A region of the analysis's working model, with its bin count. */
export async function regionOfAnalysis(db: Db, analysisId: number, key: string) {
  const [r] = await db.select({ key: regions.key, edges: regions.edges }).from(regions).where(and(eq(regions.analysisId, analysisId), eq(regions.key, key)));
  return r;
}

export async function versionOfAnalysis(db: Db, analysisId: number, number: number) {
  const [v] = await db.select({ id: modelVersions.id, number: modelVersions.number, note: modelVersions.note }).from(modelVersions).where(and(eq(modelVersions.analysisId, analysisId), eq(modelVersions.number, number)));
  return v;
}

export async function insertQuestion(db: DbOrTx, values: typeof questions.$inferInsert) {
  const [q] = await db.insert(questions).values(values).returning({ id: questions.id });
  return q.id;
}

export async function insertAnswer(db: DbOrTx, values: typeof answers.$inferInsert) {
  await db.insert(answers).values(values);
}

export async function updateQuestion(db: DbOrTx, id: number, values: Partial<typeof questions.$inferInsert>) {
  await db.update(questions).set(values).where(eq(questions.id, id));
}
