import { and, eq } from 'drizzle-orm';
import { ROLE_LABELS, type MemberRole } from '@shared/permissions';
import type { AppContext } from '../context';
import { memberships, users } from '../db/schema';
import type { AnalysisRow } from '../db/analyses.repository';

/** The product's e-mails: who gets which message, in plain words, with a link to act on. */

type Entry = { key: string; label: string; ownerId: number | null };

const entryLink = (baseUrl: string, analysis: AnalysisRow, entry: Entry) => `${baseUrl}/a/${analysis.slug}/entries/${encodeURIComponent(entry.key)}`;

async function emailsOf(ctx: AppContext, analysisId: number, role: MemberRole) {
  const rows = await ctx.db
    .select({ email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.analysisId, analysisId), eq(memberships.role, role)));
  return rows.map((r) => r.email);
}

async function ownerEmail(ctx: AppContext, entry: Entry) {
  if (!entry.ownerId) return [];
  const [u] = await ctx.db.select({ email: users.email }).from(users).where(eq(users.id, entry.ownerId));
  return u ? [u.email] : [];
}

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

export async function notifySubmitted(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; reason: string }) {
  await ctx.mailer.send({
    to: await emailsOf(ctx, p.analysis.id, 'convener'),
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key} awaits review`,
    text: [`${p.by} ${p.reason} the register entry "${p.entry.label}" (${p.entry.key}); it awaits a convener's review.`, '', entryLink(p.baseUrl, p.analysis, p.entry)].join('\n'),
  });
}

export async function notifyAccepted(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; comment: string }) {
  await ctx.mailer.send({
    to: await ownerEmail(ctx, p.entry),
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key} was accepted`,
    text: [`${p.by} accepted the register entry "${p.entry.label}" (${p.entry.key}).`, p.comment ? `\nComment: ${p.comment}` : '', '', entryLink(p.baseUrl, p.analysis, p.entry)].join('\n'),
  });
}

export async function notifySentBack(ctx: AppContext, p: { baseUrl: string; analysis: AnalysisRow; entry: Entry; by: string; comment: string }) {
  await ctx.mailer.send({
    to: await ownerEmail(ctx, p.entry),
    analysisId: p.analysis.id,
    subject: `[${p.analysis.slug}] ${p.entry.key} was sent back`,
    text: [`${p.by} sent the register entry "${p.entry.label}" (${p.entry.key}) back to you with this comment:`, '', p.comment, '', 'Change what is asked, then submit it again:', entryLink(p.baseUrl, p.analysis, p.entry)].join('\n'),
  });
}
