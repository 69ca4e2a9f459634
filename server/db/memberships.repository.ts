import { and, eq, isNull } from 'drizzle-orm';
import type { DbOrTx } from './revisions.repository';
import { analyses, invitations, memberships, users } from './schema';

export type MembershipRow = typeof memberships.$inferSelect;

export async function membershipRow(db: DbOrTx, analysisId: number, userId: number) {
  const [m] = await db.select().from(memberships).where(and(eq(memberships.analysisId, analysisId), eq(memberships.userId, userId)));
  return m;
}

export async function insertMembership(db: DbOrTx, values: typeof memberships.$inferInsert) {
  await db.insert(memberships).values(values);
}

export async function updateMembership(db: DbOrTx, analysisId: number, userId: number, values: Partial<typeof memberships.$inferInsert>) {
  await db.update(memberships).set(values).where(and(eq(memberships.analysisId, analysisId), eq(memberships.userId, userId)));
}

export async function deleteMembership(db: DbOrTx, analysisId: number, userId: number) {
  await db.delete(memberships).where(and(eq(memberships.analysisId, analysisId), eq(memberships.userId, userId)));
}

export async function insertInvitation(db: DbOrTx, values: typeof invitations.$inferInsert) {
  await db.insert(invitations).values(values);
}

/** An invitation not yet accepted, by the hash of its token, with its analysis and who sent it. */
export async function openInvitationByHash(db: DbOrTx, tokenHash: string) {
  const [row] = await db
    .select({ invitation: invitations, analysis: analyses, inviter: users.name })
    .from(invitations)
    .innerJoin(analyses, eq(analyses.id, invitations.analysisId))
    .innerJoin(users, eq(users.id, invitations.invitedById))
    .where(and(eq(invitations.tokenHash, tokenHash), isNull(invitations.acceptedAt)));
  return row;
}

export async function markInvitationAccepted(db: DbOrTx, id: number) {
  await db.update(invitations).set({ acceptedAt: new Date() }).where(eq(invitations.id, id));
}
