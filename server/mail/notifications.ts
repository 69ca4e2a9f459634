import { ROLE_LABELS, type MemberRole } from '@shared/permissions';
import type { AppContext } from '../context';
import type { AnalysisRow } from '../db/analyses.repository';

/**
 * The product's e-mails, in plain words, with a link to act on. The services decide who gets
 * each one (services/recipients.service.ts) and pass the addresses in `to`; a message with no
 * one to go to is not sent.
 */

type Entry = { key: string; label: string; ownerId: number | null };
type To = { to: string[] };

const entryLink = (baseUrl: string, analysis: AnalysisRow, entry: Entry) => `${baseUrl}/a/${analysis.slug}/entries/${encodeURIComponent(entry.key)}`;

export async function notifyInvitation(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; email: string; role: MemberRole; inviter: string; token: string }) {
  await ctx.mailer.send({
    to: [p.email],
    analysisId: p.analysis.id,
    subject: `Invitation to "${p.analysis.name}" on Plumbline`,
    text: [
      `${p.inviter} invites you to the analysis "${p.analysis.name}" as ${ROLE_LABELS[p.role].toLowerCase()}.`,
      '',
      `Accept the invitation and choose your password here (the link works once, for 14 days):`,
      `${p.baseUrl}/invite/${p.token}`,
    ].join('\n'),
  });
}

export async function notifyAdded(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; email: string; role: MemberRole; inviter: string }) {
  await ctx.mailer.send({
    to: [p.email],
    analysisId: p.analysis.id,
    subject: `You were added to "${p.analysis.name}"`,
    text: `${p.inviter} added you to the analysis "${p.analysis.name}" as ${ROLE_LABELS[p.role].toLowerCase()}.\n\n${p.baseUrl}/a/${p.analysis.slug}`,
  });
}

export async function notifySubmitted(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; reason: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key} awaits review`,
    text: [`${p.by} ${p.reason} the register entry "${p.entry.label}" (${p.entry.key}); it awaits a convener's review.`, '', entryLink(p.baseUrl, p.analysis, p.entry)].join('\n'),
  });
}

/** A nominal the entry's variations were made against changed: its owner hears of it. */
export async function notifyNominalChanged(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; templates: string[]; sentBack: boolean } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key}: the nominal changed since its variation was uploaded`,
    text: [
      `${p.by} replaced the nominal template of ${p.templates.join(', ')}. The variations of "${p.entry.label}" (${p.entry.key}) were made against the old nominal: they are marked "nominal changed since upload", with the old and new nominal per bin.`,
      ...(p.sentBack ? ['The entry was accepted, so it went back to review.'] : []),
      'Upload the variation again against the new nominal, or say at the next frozen version whether to keep it as a relative shift or as absolute yields.',
      '',
      entryLink(p.baseUrl, p.analysis, p.entry),
    ].join('\n'),
  });
}

export async function notifyAccepted(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; comment: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key} was accepted`,
    text: [`${p.by} accepted the register entry "${p.entry.label}" (${p.entry.key}).`, p.comment ? `\nComment: ${p.comment}` : '', '', entryLink(p.baseUrl, p.analysis, p.entry)].join('\n'),
  });
}

export async function notifySentBack(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; comment: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key} was sent back`,
    text: [`${p.by} sent the register entry "${p.entry.label}" (${p.entry.key}) back to you with this comment:`, '', p.comment, '', 'Change what is asked, then submit it again:', entryLink(p.baseUrl, p.analysis, p.entry)].join('\n'),
  });
}

// ---- questions on parameters

type QuestionMail = { baseUrl: string; analysis: AnalysisRow; questionId: number; title: string; entry: Entry; by: string };
const questionLink = (p: QuestionMail) => `${p.baseUrl}/a/${p.analysis.slug}/questions/${p.questionId}`;

/** A convener asked: the entry's owner and the analysts hear of it. */
export async function notifyQuestionRaised(ctx: AppContext, p: QuestionMail & { body: string; fit: string | null } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] Question on ${p.entry.key}: ${p.title}`,
    text: [`${p.by} asks about "${p.entry.label}" (${p.entry.key})${p.fit ? ` in ${p.fit}` : ''}:`, '', p.body, '', 'Answer it here:', questionLink(p)].join('\n'),
  });
}

/** Someone answered: the convener who asked and the owner hear of it. */
export async function notifyQuestionAnswered(ctx: AppContext, p: QuestionMail & { body: string; authorId: number | null } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] Answer on ${p.entry.key}: ${p.title}`,
    text: [`${p.by} answered the question "${p.title}" on ${p.entry.key}:`, '', p.body, '', questionLink(p)].join('\n'),
  });
}

/** Resolved or reopened: the owner hears of it. */
export async function notifyQuestionStep(ctx: AppContext, p: QuestionMail & { step: 'resolved' | 'reopened'; note: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] Question on ${p.entry.key} ${p.step}: ${p.title}`,
    text: [`${p.by} ${p.step} the question "${p.title}" on ${p.entry.key}.`, p.note ? `\n${p.note}` : '', '', questionLink(p)].join('\n'),
  });
}

// ---- blinding

/** An analyst asks to unblind: the conveners decide. */
export async function notifyUnblindingRequested(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; by: string; note: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] Unblinding requested by ${p.by}`,
    text: [`${p.by} asks to unblind "${p.analysis.name}":`, '', p.note, '', 'Approve or decline on the analysis overview:', `${p.baseUrl}/a/${p.analysis.slug}`].join('\n'),
  });
}

/** The decision: the analysts (the requester among them) hear of it. */
export async function notifyUnblindingDecided(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; by: string; approved: boolean; note: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] Unblinding ${p.approved ? 'approved' : 'declined'} by ${p.by}`,
    text: [
      p.approved
        ? `${p.by} approved unblinding "${p.analysis.name}". Observed signal-region data are now shown, and fits to observed data may include the signal regions.`
        : `${p.by} declined unblinding "${p.analysis.name}"; it stays blinded.`,
      p.note ? `\n${p.note}` : '',
      '',
      `${p.baseUrl}/a/${p.analysis.slug}`,
    ].join('\n'),
  });
}

/** One of two required approvals: the conveners and analysts hear that a second is awaited. */
export async function notifyUnblindingApprovedOnce(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; by: string; note: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] Unblinding approved by ${p.by}; a second convener must approve`,
    text: [
      `${p.by} approved unblinding "${p.analysis.name}". This analysis needs two conveners to approve: it stays blinded until another convener does.`,
      p.note ? `\n${p.note}` : '',
      '',
      `${p.baseUrl}/a/${p.analysis.slug}`,
    ].join('\n'),
  });
}

/**
 * An admin changed their own membership of a blinded analysis, or made someone a convener of it:
 * every convener is told.
 */
export async function notifyAdminMembershipChange(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; own: boolean; text: string } & To) {
  if (!p.to.length) return;
  await ctx.mailer.send({
    to: p.to,
    analysisId: p.analysis.id,
    subject: p.own ? `[${p.analysis.slug}] An admin changed their own membership of this blinded analysis` : `[${p.analysis.slug}] An admin gave the convener role in this blinded analysis`,
    text: [
      p.text,
      '',
      'Admins manage memberships of every analysis. While an analysis is blinded, a change an admin makes to their own membership, and every convener role an admin gives, is announced to every convener and written in the blinding log, so that no one stands on both sides of an unblinding unseen.',
      '',
      `${p.baseUrl}/a/${p.analysis.slug}`,
    ].join('\n'),
  });
}
