import { and, desc, eq, gte, inArray, isNotNull } from 'drizzle-orm';
import type { AnalysisRow } from './analyses.repository';
import type { DbOrTx } from './revisions.repository';
import { analyses, blindingEvents, invitations, memberships, users } from './schema';

/** The blinding log of an analysis, newest first, with the names of who acted. */
export const blindingEventsOf = (db: DbOrTx, analysisId: number) =>
  db
    .select({ id: blindingEvents.id, action: blindingEvents.action, note: blindingEvents.note, checklist: blindingEvents.checklist, by: users.name, at: blindingEvents.createdAt })
    .from(blindingEvents)
    .leftJoin(users, eq(users.id, blindingEvents.userId))
    .where(eq(blindingEvents.analysisId, analysisId))
    .orderBy(desc(blindingEvents.createdAt), desc(blindingEvents.id));

export async function addBlindingEvent(db: DbOrTx, event: typeof blindingEvents.$inferInsert) {
  await db.insert(blindingEvents).values(event);
}

/** The analysis's blinding state and settings as the database holds them now. */
export async function blindingStateOf(db: DbOrTx, analysisId: number) {
  const [a] = await db
    .select({ blinding: analyses.blinding, blindedRegions: analyses.blindedRegions, unblindingApprovals: analyses.unblindingApprovals })
    .from(analyses)
    .where(eq(analyses.id, analysisId));
  return a;
}

/**
 * Moves the state with its log line in one transaction, and only from the state the step
 * expects, so that two conveners deciding at once cannot both win. False when the state was not `from`.
 */
export async function moveBlindingState(db: DbOrTx, analysisId: number, from: AnalysisRow['blinding'], to: AnalysisRow['blinding'], event: Omit<typeof blindingEvents.$inferInsert, 'analysisId'>) {
  return db.transaction(async (tx) => {
    const rows = await tx
      .update(analyses)
      .set({ blinding: to })
      .where(and(eq(analyses.id, analysisId), eq(analyses.blinding, from)))
      .returning({ id: analyses.id });
    if (!rows.length) return false;
    await tx.insert(blindingEvents).values({ ...event, analysisId });
    return true;
  });
}

/** The pending request (the newest "requested" event) with the approvals given since. */
export async function pendingRequest(db: DbOrTx, analysisId: number) {
  const [request] = await db
    .select({ id: blindingEvents.id, userId: blindingEvents.userId, at: blindingEvents.createdAt })
    .from(blindingEvents)
    .where(and(eq(blindingEvents.analysisId, analysisId), eq(blindingEvents.action, 'requested')))
    .orderBy(desc(blindingEvents.createdAt), desc(blindingEvents.id))
    .limit(1);
  if (!request) return undefined;
  const approvals = await db
    .select({ userId: blindingEvents.userId })
    .from(blindingEvents)
    .where(and(eq(blindingEvents.analysisId, analysisId), eq(blindingEvents.action, 'first_approval'), gte(blindingEvents.id, request.id)));
  return { ...request, approvedBy: approvals.map((a) => a.userId) };
}

/** A member's role, since when they hold it and who gave it; undefined for a non-member. */
export async function membershipOf(db: DbOrTx, analysisId: number, userId: number) {
  const [m] = await db
    .select({ role: memberships.role, roleSince: memberships.roleSince, grantedById: memberships.grantedById, email: users.email, name: users.name })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.analysisId, analysisId), eq(memberships.userId, userId)));
  return m;
}

/** Who sent the accepted invitations of this e-mail address to this analysis. */
export async function invitersOf(db: DbOrTx, analysisId: number, email: string) {
  const rows = await db
    .select({ by: invitations.invitedById })
    .from(invitations)
    .where(and(eq(invitations.analysisId, analysisId), eq(invitations.email, email), isNotNull(invitations.acceptedAt)));
  return rows.map((r) => r.by);
}

export async function namesOf(db: DbOrTx, ids: number[]) {
  if (!ids.length) return new Map<number, string>();
  const rows = await db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, ids));
  return new Map(rows.map((r) => [r.id, r.name]));
}

export async function setUnblindingApprovals(db: DbOrTx, analysisId: number, approvals: number) {
  await db.update(analyses).set({ unblindingApprovals: approvals }).where(eq(analyses.id, analysisId));
}
