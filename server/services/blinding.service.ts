import { and, desc, eq } from 'drizzle-orm';
import { unblindingDecisionSchema, unblindingRequestSchema, type BlindingLog } from '@shared/schemas/review';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import type { AnalysisRow } from '../db/analyses.repository';
import { analyses, blindingEvents, users } from '../db/schema';
import { badRequest, conflict } from '../errors';
import { notifyUnblindingDecided, notifyUnblindingRequested } from '../mail/notifications';

/**
 * The one rule every response goes through: while an analysis is not unblinded, observed counts
 * of its signal regions never leave the server.
 */
export function isWithheld(analysis: Pick<AnalysisRow, 'blinding'>, region: { role: string }): boolean {
  return analysis.blinding !== 'unblinded' && region.role === 'signal';
}

export function visibleObserved(analysis: Pick<AnalysisRow, 'blinding'>, region: { role: string; observed: number[] | null }) {
  return isWithheld(analysis, region) ? null : region.observed;
}

/**
 * Unblinding, a two-person step: an analyst asks with a note (blinded → unblinding_requested),
 * a convener approves (→ unblinded) or declines with a note (→ blinded). Every step is logged
 * with who and when, and mailed. The state changes in the same transaction as its log line,
 * and only from the state the step expects, so two conveners deciding at once cannot both win.
 */
export async function blindingLog(ctx: AppContext, access: Access): Promise<BlindingLog> {
  const events = await ctx.db
    .select({ id: blindingEvents.id, action: blindingEvents.action, note: blindingEvents.note, by: users.name, at: blindingEvents.createdAt })
    .from(blindingEvents)
    .leftJoin(users, eq(users.id, blindingEvents.userId))
    .where(eq(blindingEvents.analysisId, access.analysis.id))
    .orderBy(desc(blindingEvents.createdAt), desc(blindingEvents.id));
  return {
    state: await currentState(ctx, access),
    events: events.map((e) => ({ id: e.id, action: e.action as BlindingLog['events'][number]['action'], note: e.note, by: e.by, at: e.at.toISOString() })),
  };
}

async function moveState(ctx: AppContext, access: Access, from: AnalysisRow['blinding'], to: AnalysisRow['blinding'], action: string, note: string) {
  const moved = await ctx.db.transaction(async (tx) => {
    const rows = await tx
      .update(analyses)
      .set({ blinding: to })
      .where(and(eq(analyses.id, access.analysis.id), eq(analyses.blinding, from)))
      .returning({ id: analyses.id });
    if (!rows.length) return false;
    await tx.insert(blindingEvents).values({ analysisId: access.analysis.id, userId: access.userId, action, note });
    return true;
  });
  return moved;
}

const STATE_WORDS: Record<AnalysisRow['blinding'], string> = {
  blinded: 'blinded with no request pending',
  unblinding_requested: 'waiting for a convener to decide on unblinding',
  unblinded: 'already unblinded',
};

async function currentState(ctx: AppContext, access: Access) {
  const [a] = await ctx.db.select({ blinding: analyses.blinding }).from(analyses).where(eq(analyses.id, access.analysis.id));
  return a.blinding;
}

export async function requestUnblinding(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<BlindingLog> {
  const { note } = unblindingRequestSchema.parse(body);
  if (!(await moveState(ctx, access, 'blinded', 'unblinding_requested', 'requested', note)))
    throw conflict(`Unblinding can be requested only while the analysis is blinded with no request pending; it is ${STATE_WORDS[await currentState(ctx, access)]}.`);
  await notifyUnblindingRequested(ctx, { baseUrl, analysis: access.analysis, by: access.userName, note });
  return blindingLog(ctx, access);
}

export async function decideUnblinding(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<BlindingLog> {
  const { approve, note } = unblindingDecisionSchema.parse(body);
  if (!approve && !note) throw badRequest('Say why you decline: the analysts read it in the log and the e-mail.', [{ path: ['note'], message: 'A decline needs a note.' }]);
  if (!(await moveState(ctx, access, 'unblinding_requested', approve ? 'unblinded' : 'blinded', approve ? 'approved' : 'declined', note)))
    throw conflict(`There is no unblinding request to decide: the analysis is ${STATE_WORDS[await currentState(ctx, access)]}.`);
  await notifyUnblindingDecided(ctx, { baseUrl, analysis: access.analysis, by: access.userName, approved: approve, note });
  return blindingLog(ctx, access);
}
