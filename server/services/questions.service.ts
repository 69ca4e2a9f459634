import {
  answerQuestionSchema,
  questionFilterSchema,
  questionStepSchema,
  raiseQuestionSchema,
  type Evidence,
  type EvidenceCard,
  type QuestionDetail,
  type QuestionSubject,
  type QuestionSummary,
} from '@shared/schemas/review';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { answersOf, fitOfAnalysis, insertAnswer, insertQuestion, questionRows, questionWithEntry, regionOfAnalysis, updateQuestion, versionOfAnalysis, type QuestionFilter } from '../db/questions.repository';
import type { AnswerEvidence } from '../db/schema';
import { entryExists, findEntry } from '../db/entries.repository';
import { badRequest, conflict, notFound } from '../errors';
import { notifyQuestionAnswered, notifyQuestionRaised, notifyQuestionStep } from '../mail/notifications';
import { audience, personal, withRoles } from './recipients.service';
import { untilQuestionsChange } from '../cache/change-notices';

/**
 * Questions from every reviewer, on anything: any member (a reader too) raises one on a parameter
 * (its register entry), a region or one of its bins, a fit or a model version, optionally tied to
 * a fit; members answer, attaching evidence (fits, variants, diagnoses, versions), and a convener
 * resolves or reopens it. The states:
 * open → answered (first answer) → resolved, and resolved → open again. Each step that another
 * person should act on is mailed (mail/notifications.ts). Resolving and reopening notes join
 * the thread as answers, so the thread is the whole history.
 */

const person = (p: { id: number; name: string } | null) => (p ? { id: p.id, name: p.name } : null);

/**
 * The questions a filter selects. The queue as most people open it (all, or one state) is shared
 * by every reader until the register (questions, entries) or an answer changes; narrower filters, of
 * which there can be any number, are read each time.
 */
function readQuestions(ctx: AppContext, access: Access, filter: QuestionFilter): Promise<(QuestionSummary & { body: string })[]> {
  const { state, ...narrower } = filter;
  if (Object.values(narrower).some((v) => v !== undefined)) return buildQuestions(ctx, access, filter);
  return untilQuestionsChange(ctx.client, access.analysis.id, `questions ${state ?? 'all'}`, () => buildQuestions(ctx, access, filter));
}

async function buildQuestions(ctx: AppContext, access: Access, filter: QuestionFilter): Promise<(QuestionSummary & { body: string })[]> {
  const rows = await questionRows(ctx.db, access.analysis.id, filter);
  const list = rows.map((r): QuestionSummary & { body: string } => {
    const times = [r.q.createdAt, r.q.resolvedAt, r.lastAnswer ? new Date(r.lastAnswer) : null].filter((t): t is Date => !!t);
    return {
      id: r.q.id,
      about: aboutOf(r.q, r.entry?.key ? { key: r.entry.key } : null, r.fit, r.version),
      entry: r.entry?.key ? { key: r.entry.key, label: r.entry.label ?? r.entry.key, group: r.entry.group, owner: person(r.owner) } : null,
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
  const cards = new Map<string, EvidenceCard>();
  for (const a of thread) for (const e of a.evidence) if (!cards.has(JSON.stringify(e))) cards.set(JSON.stringify(e), await evidenceCard(ctx, access, e));
  return {
    ...question,
    thread: thread.map((a) => ({ id: a.id, body: a.body, createdAt: a.createdAt.toISOString(), author: person(a.author), evidence: a.evidence.map((e) => cards.get(JSON.stringify(e))!) })),
  };
}

type SubjectRow = { subject: string; regionKey: string | null; bin: number | null };

/** What a question is about, in words. */
function aboutOf(q: SubjectRow, entry: { key: string } | null, fit: { id: number; label: string } | null, version: number | null): QuestionSummary['about'] {
  const kind = q.subject as QuestionSubject;
  const label =
    kind === 'parameter'
      ? `parameter ${entry?.key ?? '(removed)'}`
      : kind === 'region'
        ? `region ${q.regionKey}`
        : kind === 'bin'
          ? `region ${q.regionKey}, bin ${q.bin}`
          : kind === 'fit'
            ? fit
              ? `fit #${fit.id}${fit.label ? ` (${fit.label})` : ''}`
              : 'a fit since removed'
            : version !== null
              ? `model version ${version}`
              : 'a model version since removed';
  return { kind, label, region: q.regionKey, bin: q.bin, version };
}

const fitWords = (options: unknown) => {
  const o = (options ?? {}) as { dataset?: string; controlOnly?: boolean; hiddenMu?: boolean; statOnly?: boolean };
  return [o.dataset === 'asimov' ? 'Asimov dataset' : 'observed data', o.controlOnly ? 'control regions only' : null, o.hiddenMu ? 'μ hidden' : null, o.statOnly ? 'statistics only' : null].filter(Boolean).join(', ');
};

/** A piece of evidence as the thread shows it; a fit or version removed since is said so. */
async function evidenceCard(ctx: AppContext, access: Access, e: Evidence): Promise<EvidenceCard> {
  if (e.kind === 'version') {
    const v = await versionOfAnalysis(ctx.db, access.analysis.id, e.version);
    return { evidence: e, label: `Model version ${e.version}`, state: null, detail: v ? v.note || 'no note' : 'no longer there' };
  }
  const fit = await fitOfAnalysis(ctx.db, access.analysis.id, e.fitId);
  const name = fit ? `Fit #${fit.id}${fit.label ? `: ${fit.label}` : ''}` : `Fit #${e.fitId}`;
  const label = e.kind === 'diagnosis' ? `Diagnosis of ${e.parameter} in ${name}` : e.kind === 'variant' ? `Variant ${name}` : name;
  return { evidence: e, label, state: fit?.state ?? null, detail: fit ? `${fitWords(fit.options)} · model version ${fit.versionNumber}` : 'no longer there' };
}

/** Each piece of evidence must exist in this analysis; a refusal names its place in the list. */
async function checkEvidence(ctx: AppContext, access: Access, list: Evidence[]): Promise<AnswerEvidence[]> {
  const issues: { path: (string | number)[]; message: string }[] = [];
  for (const [i, e] of list.entries()) {
    if (e.kind === 'version') {
      if (!(await versionOfAnalysis(ctx.db, access.analysis.id, e.version))) issues.push({ path: ['evidence', i, 'version'], message: `there is no model version ${e.version}` });
      continue;
    }
    const fit = await fitOfAnalysis(ctx.db, access.analysis.id, e.fitId);
    if (!fit) issues.push({ path: ['evidence', i, 'fitId'], message: `there is no fit #${e.fitId} in this analysis` });
    else if (e.kind === 'variant' && !isVariant(fit.options)) issues.push({ path: ['evidence', i, 'kind'], message: `fit #${e.fitId} is the nominal fit, not a variant: attach it as a fit` });
    if (e.kind === 'diagnosis' && !(await entryExists(ctx.db, access.analysis.id, e.parameter))) issues.push({ path: ['evidence', i, 'parameter'], message: `there is no parameter "${e.parameter}" in the register` });
  }
  if (issues.length) throw badRequest(`The evidence cannot be attached: ${issues.map((i) => i.message).join('; ')}.`, issues);
  return list;
}

/** A fit whose options vary the nominal one (held parameters, statistics only, decorrelation, control only, hidden μ, another basis). */
function isVariant(options: unknown): boolean {
  const o = (options ?? {}) as Record<string, unknown>;
  const nonEmpty = (k: string) => Array.isArray(o[k]) && (o[k] as unknown[]).length > 0;
  return nonEmpty('hold') || nonEmpty('holdGroups') || nonEmpty('decorrelate') || nonEmpty('excludeRegions') || o.statOnly === true || o.controlOnly === true || o.hiddenMu === true || (o.expectedFrom !== undefined && o.expectedFrom !== 'prefit') || o.breakdown === true;
}

async function questionRow(ctx: AppContext, access: Access, id: number) {
  const row = await questionWithEntry(ctx.db, access.analysis.id, id);
  if (!row) throw notFound(`Question ${id}`);
  return row;
}

/** The mails name the subject: the parameter's key and label, or the subject in words. */
const mailOf = (access: Access, baseUrl: string, row: { q: { id: number; title: string } & SubjectRow; entry: { key: string; label: string; ownerId: number | null } | null }) => {
  const about = aboutOf(row.q, row.entry, null, null).label;
  return {
    baseUrl,
    analysis: access.analysis,
    questionId: row.q.id,
    title: row.q.title,
    entry: row.entry ?? { key: about, label: about, ownerId: null },
    by: access.userName,
  };
};

/** Who hears of a question besides its people: a parameter's owner and the analysts, or (another subject) the analysts and conveners. */
const raisedAudience = (ctx: AppContext, access: Access, ownerId: number | null) =>
  ownerId !== null ? [personal(ctx, ownerId), withRoles(ctx, access.analysis.id, 'analyst')] : [withRoles(ctx, access.analysis.id, 'analyst', 'convener')];

export async function raiseQuestion(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<QuestionDetail> {
  const input = raiseQuestionSchema.parse(body);
  const subject = await subjectOf(ctx, access, input);
  let fitLabel: string | null = null;
  if (input.fitId !== null) {
    const fit = await fitOfAnalysis(ctx.db, access.analysis.id, input.fitId);
    if (!fit) throw badRequest(`Unknown fit: there is no fit #${input.fitId} in this analysis.`, [{ path: ['fitId'], message: 'unknown fit' }]);
    fitLabel = `fit ${fit.id}${fit.label ? ` (${fit.label})` : ''}`;
  }
  const values = { analysisId: access.analysis.id, ...subject.values, fitId: input.fitId, authorId: access.userId, title: input.title, body: input.body };
  const q = { id: await insertQuestion(ctx.db, values) };
  await notifyQuestionRaised(ctx, {
    ...mailOf(access, baseUrl, { q: { id: q.id, title: input.title, ...subject.row }, entry: subject.entry }),
    to: await audience(ctx, access.userId, raisedAudience(ctx, access, subject.entry?.ownerId ?? null)),
    body: input.body,
    fit: fitLabel,
  });
  return getQuestion(ctx, access, q.id);
}

/** Exactly one subject, which must exist: refusals name the field to fix. */
async function subjectOf(ctx: AppContext, access: Access, input: ReturnType<typeof raiseQuestionSchema.parse>) {
  const given = (['entry', 'region', 'version'] as const).filter((k) => input[k] !== null);
  if (given.length > 1) throw badRequest(`One subject per question: give ${given.join(' or ')}, not both.`, [{ path: [given[1]], message: `give either ${given[0]} or ${given[1]}` }]);
  if (input.bin !== null && input.region === null) throw badRequest('A bin needs its region: name the region too.', [{ path: ['region'], message: 'name the region of the bin' }]);
  if (input.entry !== null) {
    const entry = await findEntry(ctx.db, access.analysis.id, input.entry);
    return { values: { subject: 'parameter', entryId: entry.id }, row: { subject: 'parameter', regionKey: null, bin: null }, entry };
  }
  if (input.region !== null) {
    const region = await regionOfAnalysis(ctx.db, access.analysis.id, input.region);
    if (!region) throw badRequest(`Unknown region: this analysis has no region "${input.region}".`, [{ path: ['region'], message: 'unknown region' }]);
    const bins = region.edges.length - 1;
    if (input.bin !== null && input.bin > bins) throw badRequest(`Unknown bin: region "${input.region}" has ${bins} bins, counted from 1, so there is no bin ${input.bin}.`, [{ path: ['bin'], message: `from 1 to ${bins}` }]);
    const subject = input.bin !== null ? 'bin' : 'region';
    return { values: { subject, regionKey: region.key, bin: input.bin }, row: { subject, regionKey: region.key, bin: input.bin }, entry: null };
  }
  if (input.version !== null) {
    const version = await versionOfAnalysis(ctx.db, access.analysis.id, input.version);
    if (!version) throw badRequest(`Unknown version: this analysis has no model version ${input.version}.`, [{ path: ['version'], message: 'unknown version' }]);
    return { values: { subject: 'version', versionId: version.id }, row: { subject: 'version', regionKey: null, bin: null }, entry: null };
  }
  if (input.fitId !== null) return { values: { subject: 'fit' }, row: { subject: 'fit', regionKey: null, bin: null }, entry: null };
  throw badRequest('Say what the question is about: a parameter (entry), a region and maybe one of its bins, a fit (fitId) or a model version.', [{ path: ['entry'], message: 'name what the question is about' }]);
}

export async function answerQuestion(ctx: AppContext, access: Access, id: number, body: unknown, baseUrl: string): Promise<QuestionDetail> {
  const input = answerQuestionSchema.parse(body);
  const row = await questionRow(ctx, access, id);
  if (row.q.state === 'resolved') throw conflict('This question is resolved. A convener reopens it before it takes new answers.');
  const evidence = await checkEvidence(ctx, access, input.evidence);
  await ctx.db.transaction(async (tx) => {
    await insertAnswer(tx, { questionId: id, authorId: access.userId, body: input.body, evidence });
    if (row.q.state === 'open') await updateQuestion(tx, id, { state: 'answered' });
  });
  await notifyQuestionAnswered(ctx, {
    ...mailOf(access, baseUrl, row),
    to: await audience(ctx, access.userId, [personal(ctx, row.q.authorId), personal(ctx, row.entry?.ownerId ?? null)]),
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
    to: await audience(ctx, access.userId, [personal(ctx, row.entry?.ownerId ?? null)]),
    step: step === 'resolve' ? 'resolved' : 'reopened',
    note,
  });
  return getQuestion(ctx, access, id);
}
