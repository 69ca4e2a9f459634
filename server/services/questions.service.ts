import { aliasedTable, and, eq, sql, type SQL } from 'drizzle-orm';
import {
  answerQuestionSchema,
  questionFilterSchema,
  questionStepSchema,
  raiseQuestionSchema,
  type QuestionDetail,
  type QuestionSummary,
} from '@shared/schemas/review';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { answers, entries, fits, groups, questions, users } from '../db/schema';
import { findEntry } from '../db/entries.repository';
import { conflict, notFound } from '../errors';
import { notifyQuestionAnswered, notifyQuestionRaised, notifyQuestionStep } from '../mail/notifications';
import { audience, personal, withRoles } from './recipients.service';

/**
 * Questions on parameters: a convener raises one on a register entry (optionally tied to a fit),
 * anyone who works on the analysis answers, the convener resolves or reopens it. The states:
 * open → answered (first answer) → resolved, and resolved → open again. Each step that another
 * person should act on is mailed (mail/notifications.ts). Resolving and reopening notes join
 * the thread as answers, so the thread is the whole history.
 */

const author = aliasedTable(users, 'author');
const owner = aliasedTable(users, 'owner');
const resolver = aliasedTable(users, 'resolver');

const person = (p: { id: number; name: string } | null) => (p ? { id: p.id, name: p.name } : null);

async function readQuestions(ctx: AppContext, access: Access, where: SQL[]): Promise<(QuestionSummary & { body: string })[]> {
  const answerCount = sql<number>`(select count(*)::int from ${answers} where ${answers.questionId} = ${questions.id})`;
  const lastAnswer = sql<Date | null>`(select max(${answers.createdAt}) from ${answers} where ${answers.questionId} = ${questions.id})`;
  const rows = await ctx.db
    .select({
      q: questions,
      entry: { key: entries.key, label: entries.label, group: groups.name },
      owner: { id: owner.id, name: owner.name },
      author: { id: author.id, name: author.name },
      resolver: { id: resolver.id, name: resolver.name },
      fit: { id: fits.id, label: fits.label },
      answers: answerCount,
      lastAnswer,
    })
    .from(questions)
    .innerJoin(entries, eq(entries.id, questions.entryId))
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .leftJoin(owner, eq(owner.id, entries.ownerId))
    .leftJoin(author, eq(author.id, questions.authorId))
    .leftJoin(resolver, eq(resolver.id, questions.resolvedById))
    .leftJoin(fits, eq(fits.id, questions.fitId))
    .where(and(eq(questions.analysisId, access.analysis.id), ...where));
  const list = rows.map((r): QuestionSummary & { body: string } => {
    const times = [r.q.createdAt, r.q.resolvedAt, r.lastAnswer ? new Date(r.lastAnswer) : null].filter((t): t is Date => !!t);
    return {
      id: r.q.id,
      entry: { key: r.entry.key, label: r.entry.label, group: r.entry.group, owner: person(r.owner) },
      fit: r.fit ? { id: r.fit.id, label: r.fit.label || `Fit ${r.fit.id}` } : null,
      title: r.q.title,
      state: r.q.state,
      author: person(r.author),
      answers: r.answers,
      createdAt: r.q.createdAt.toISOString(),
      lastActivity: new Date(Math.max(...times.map((t) => t.getTime()))).toISOString(),
      resolvedBy: r.q.state === 'resolved' ? person(r.resolver) : null,
      resolvedAt: r.q.state === 'resolved' ? (r.q.resolvedAt?.toISOString() ?? null) : null,
      body: r.q.body,
    };
  });
  return list.sort((a, b) => b.lastActivity.localeCompare(a.lastActivity) || b.id - a.id);
}

export async function listQuestions(ctx: AppContext, access: Access, query: unknown): Promise<QuestionSummary[]> {
  const f = questionFilterSchema.parse(query);
  const where: SQL[] = [];
  if (f.state) where.push(eq(questions.state, f.state));
  if (f.owner) where.push(eq(entries.ownerId, f.owner));
  if (f.group) where.push(eq(groups.name, f.group));
  if (f.fit) where.push(eq(questions.fitId, f.fit));
  if (f.entry) where.push(eq(entries.key, f.entry));
  // the list leaves the bodies out: a thread is read one at a time
  return (await readQuestions(ctx, access, where)).map(({ body: _body, ...summary }) => summary);
}

export async function getQuestion(ctx: AppContext, access: Access, id: number): Promise<QuestionDetail> {
  const [question] = await readQuestions(ctx, access, [eq(questions.id, id)]);
  if (!question) throw notFound(`Question ${id}`);
  const thread = await ctx.db
    .select({ id: answers.id, body: answers.body, createdAt: answers.createdAt, author: { id: users.id, name: users.name } })
    .from(answers)
    .leftJoin(users, eq(users.id, answers.authorId))
    .where(eq(answers.questionId, id))
    .orderBy(answers.createdAt, answers.id);
  return { ...question, thread: thread.map((a) => ({ id: a.id, body: a.body, createdAt: a.createdAt.toISOString(), author: person(a.author) })) };
}

async function questionRow(ctx: AppContext, access: Access, id: number) {
  const [row] = await ctx.db
    .select({ q: questions, entry: { key: entries.key, label: entries.label, ownerId: entries.ownerId } })
    .from(questions)
    .innerJoin(entries, eq(entries.id, questions.entryId))
    .where(and(eq(questions.id, id), eq(questions.analysisId, access.analysis.id)));
  if (!row) throw notFound(`Question ${id}`);
  return row;
}

const mailOf = (access: Access, baseUrl: string, row: { q: { id: number; title: string }; entry: { key: string; label: string; ownerId: number | null } }) => ({
  baseUrl,
  analysis: access.analysis,
  questionId: row.q.id,
  title: row.q.title,
  entry: row.entry,
  by: access.userName,
});

export async function raiseQuestion(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<QuestionDetail> {
  const input = raiseQuestionSchema.parse(body);
  const entry = await findEntry(ctx.db, access.analysis.id, input.entry);
  let fitLabel: string | null = null;
  if (input.fitId !== null) {
    const [fit] = await ctx.db
      .select({ id: fits.id, label: fits.label })
      .from(fits)
      .where(and(eq(fits.analysisId, access.analysis.id), eq(fits.id, input.fitId)));
    if (!fit) throw notFound(`Fit ${input.fitId}`);
    fitLabel = `fit ${fit.id}${fit.label ? ` (${fit.label})` : ''}`;
  }
  const [q] = await ctx.db
    .insert(questions)
    .values({ analysisId: access.analysis.id, entryId: entry.id, fitId: input.fitId, authorId: access.userId, title: input.title, body: input.body })
    .returning({ id: questions.id });
  await notifyQuestionRaised(ctx, {
    ...mailOf(access, baseUrl, { q: { id: q.id, title: input.title }, entry }),
    to: await audience(ctx, access.userId, [personal(ctx, entry.ownerId), withRoles(ctx, access.analysis.id, 'analyst')]),
    body: input.body,
    fit: fitLabel,
  });
  return getQuestion(ctx, access, q.id);
}

export async function answerQuestion(ctx: AppContext, access: Access, id: number, body: unknown, baseUrl: string): Promise<QuestionDetail> {
  const input = answerQuestionSchema.parse(body);
  const row = await questionRow(ctx, access, id);
  if (row.q.state === 'resolved') throw conflict('This question is resolved. A convener reopens it before it takes new answers.');
  await ctx.db.transaction(async (tx) => {
    await tx.insert(answers).values({ questionId: id, authorId: access.userId, body: input.body });
    if (row.q.state === 'open') await tx.update(questions).set({ state: 'answered' }).where(eq(questions.id, id));
  });
  await notifyQuestionAnswered(ctx, {
    ...mailOf(access, baseUrl, row),
    to: await audience(ctx, access.userId, [personal(ctx, row.q.authorId), personal(ctx, row.entry.ownerId)]),
    body: input.body,
    authorId: row.q.authorId,
  });
  return getQuestion(ctx, access, id);
}

/** Resolve (from open or answered) or reopen (from resolved); a note joins the thread. */
export async function stepQuestion(ctx: AppContext, access: Access, id: number, step: 'resolve' | 'reopen', body: unknown, baseUrl: string): Promise<QuestionDetail> {
  const { note } = questionStepSchema.parse(body ?? {});
  const row = await questionRow(ctx, access, id);
  if (step === 'resolve' && row.q.state === 'resolved') throw conflict('This question is already resolved.');
  if (step === 'reopen' && row.q.state !== 'resolved') throw conflict('Only a resolved question can be reopened; this one is still ' + row.q.state + '.');
  await ctx.db.transaction(async (tx) => {
    if (note) await tx.insert(answers).values({ questionId: id, authorId: access.userId, body: note });
    await tx
      .update(questions)
      .set(step === 'resolve' ? { state: 'resolved', resolvedAt: new Date(), resolvedById: access.userId } : { state: 'open', resolvedAt: null, resolvedById: null })
      .where(eq(questions.id, id));
  });
  await notifyQuestionStep(ctx, {
    ...mailOf(access, baseUrl, row),
    to: await audience(ctx, access.userId, [personal(ctx, row.entry.ownerId)]),
    step: step === 'resolve' ? 'resolved' : 'reopened',
    note,
  });
  return getQuestion(ctx, access, id);
}
