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
import { answersOf, fitOfAnalysis, insertAnswer, insertQuestion, questionRows, questionWithEntry, updateQuestion, type QuestionFilter } from '../db/questions.repository';
import { findEntry } from '../db/entries.repository';
import { conflict, notFound } from '../errors';
import { notifyQuestionAnswered, notifyQuestionRaised, notifyQuestionStep } from '../mail/notifications';
import { audience, personal, withRoles } from './recipients.service';
import { untilRegisterChanges } from '../cache/change-notices';

/**
 * Questions on parameters: a convener raises one on a register entry (optionally tied to a fit),
 * anyone who works on the analysis answers, the convener resolves or reopens it. The states:
 * open → answered (first answer) → resolved, and resolved → open again. Each step that another
 * person should act on is mailed (mail/notifications.ts). Resolving and reopening notes join
 * the thread as answers, so the thread is the whole history.
 */

const person = (p: { id: number; name: string } | null) => (p ? { id: p.id, name: p.name } : null);

/**
 * The questions a filter selects. The queue as most people open it (all, or one state) is shared
 * by every reader until the register (questions, answers, entries) changes; narrower filters, of
 * which there can be any number, are read each time.
 */
function readQuestions(ctx: AppContext, access: Access, filter: QuestionFilter): Promise<(QuestionSummary & { body: string })[]> {
  const { state, ...narrower } = filter;
  if (Object.values(narrower).some((v) => v !== undefined)) return buildQuestions(ctx, access, filter);
  return untilRegisterChanges(ctx.client, access.analysis.id, `questions ${state ?? 'all'}`, () => buildQuestions(ctx, access, filter));
}

async function buildQuestions(ctx: AppContext, access: Access, filter: QuestionFilter): Promise<(QuestionSummary & { body: string })[]> {
  const rows = await questionRows(ctx.db, access.analysis.id, filter);
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
  // the list leaves the bodies out: a thread is read one at a time
  return (await readQuestions(ctx, access, f)).map(({ body: _body, ...summary }) => summary);
}

export async function getQuestion(ctx: AppContext, access: Access, id: number): Promise<QuestionDetail> {
  const [question] = await readQuestions(ctx, access, { id });
  if (!question) throw notFound(`Question ${id}`);
  const thread = await answersOf(ctx.db, id);
  return { ...question, thread: thread.map((a) => ({ id: a.id, body: a.body, createdAt: a.createdAt.toISOString(), author: person(a.author) })) };
}

async function questionRow(ctx: AppContext, access: Access, id: number) {
  const row = await questionWithEntry(ctx.db, access.analysis.id, id);
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
    const fit = await fitOfAnalysis(ctx.db, access.analysis.id, input.fitId);
    if (!fit) throw notFound(`Fit ${input.fitId}`);
    fitLabel = `fit ${fit.id}${fit.label ? ` (${fit.label})` : ''}`;
  }
  const q = { id: await insertQuestion(ctx.db, { analysisId: access.analysis.id, entryId: entry.id, fitId: input.fitId, authorId: access.userId, title: input.title, body: input.body }) };
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
    await insertAnswer(tx, { questionId: id, authorId: access.userId, body: input.body });
    if (row.q.state === 'open') await updateQuestion(tx, id, { state: 'answered' });
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
    if (note) await insertAnswer(tx, { questionId: id, authorId: access.userId, body: note });
    await updateQuestion(tx, id, step === 'resolve' ? { state: 'resolved', resolvedAt: new Date(), resolvedById: access.userId } : { state: 'open', resolvedAt: null, resolvedById: null });
  });
  await notifyQuestionStep(ctx, {
    ...mailOf(access, baseUrl, row),
    to: await audience(ctx, access.userId, [personal(ctx, row.entry.ownerId)]),
    step: step === 'resolve' ? 'resolved' : 'reopened',
    note,
  });
  return getQuestion(ctx, access, id);
}
