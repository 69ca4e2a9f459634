import { createHash, randomBytes } from 'node:crypto';
import { acceptInvitationSchema, invitationInputSchema, type InvitationView } from '@shared/schemas/register';
import type { Access } from '../auth/authorize';
import { hashPassword } from '../auth/passwords';
import type { AppContext } from '../context';
import { insertInvitation, insertMembership, markInvitationAccepted, openInvitationByHash } from '../db/memberships.repository';
import { findUserByEmail, insertUser } from '../db/users.repository';
import { AppError, conflict, notFound } from '../errors';
import { notifyAdded, notifyInvitation } from '../mail/notifications';
import { addMembership } from './members.service';
import { logMembershipChange } from './blinding.service';

/** An invitation link works once and for 14 days (common practice, no source). */
const INVITATION_DAYS = 14;
const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

/** Inviting an e-mail that has an account adds the member at once; otherwise an invitation link is mailed. */
export async function invite(ctx: AppContext, access: Access, body: unknown, baseUrl: string) {
  const { email, role } = invitationInputSchema.parse(body);
  const user = await findUserByEmail(ctx.db, email);
  if (user) {
    await addMembership(ctx, access, user, role, baseUrl);
    await notifyAdded(ctx, { baseUrl, analysis: access.analysis, email, role, inviter: access.userName });
    return { outcome: 'added' as const, email };
  }
  const token = randomBytes(24).toString('base64url');
  await insertInvitation(ctx.db, { analysisId: access.analysis.id, email, role, tokenHash: hashToken(token), invitedById: access.userId });
  await notifyInvitation(ctx, { baseUrl, analysis: access.analysis, email, role, inviter: access.userName, token });
  return { outcome: 'invited' as const, email };
}

async function openInvitation(ctx: AppContext, token: string) {
  const row = await openInvitationByHash(ctx.db, hashToken(token));
  if (!row) throw notFound('This invitation (it may have been used already)');
  if (Date.now() - row.invitation.createdAt.getTime() > INVITATION_DAYS * 86400_000)
    throw new AppError(410, `This invitation has expired (links work for ${INVITATION_DAYS} days). Ask the convener to invite you again.`, 'expired');
  return row;
}

export async function showInvitation(ctx: AppContext, token: string): Promise<InvitationView> {
  const { invitation, analysis, inviter } = await openInvitation(ctx, token);
  return { analysis: analysis.name, analysisSlug: analysis.slug, email: invitation.email, role: invitation.role, invitedBy: inviter };
}

/** Creates the account and the membership in one transaction; the caller signs the new user in. */
export async function acceptInvitation(ctx: AppContext, token: string, body: unknown) {
  const input = acceptInvitationSchema.parse(body);
  const { invitation, analysis, inviter } = await openInvitation(ctx, token);
  if (await findUserByEmail(ctx.db, invitation.email)) throw conflict(`An account for ${invitation.email} exists already: sign in, and ask the convener to add you.`);
  const passwordHash = await hashPassword(input.password);
  return ctx.db.transaction(async (tx) => {
    const user = await insertUser(tx, { email: invitation.email, name: input.name, passwordHash });
    await insertMembership(tx, { analysisId: invitation.analysisId, userId: user.id, role: invitation.role, grantedById: invitation.invitedById });
    await markInvitationAccepted(tx, invitation.id);
    await logMembershipChange(tx, analysis, user, { kind: 'joined', user, role: invitation.role, invitedBy: inviter });
    return user;
  });
}
