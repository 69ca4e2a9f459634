import { addMemberSchema, updateMemberSchema, type Member } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { countConveners, listMembers as listMemberRows } from '../db/analyses.repository';
import { deleteMembership, insertMembership, membershipRow, updateMembership } from '../db/memberships.repository';
import type { Tx } from '../db/revisions.repository';
import { findUserByEmail } from '../db/users.repository';
import { conflict, notFound } from '../errors';
import { announceMembershipChange, logMembershipChange, type MembershipChange } from './blinding.service';

const toMember = (m: { userId: number; email: string; name: string; role: Member['role']; since: Date }): Member => ({
  ...m,
  since: m.since.toISOString(),
});

export async function listMembers(ctx: AppContext, access: Access): Promise<Member[]> {
  return (await listMemberRows(ctx.db, access.analysis.id)).map(toMember);
}

async function findMember(ctx: AppContext, access: Access, userId: number) {
  const member = (await listMemberRows(ctx.db, access.analysis.id)).find((m) => m.userId === userId);
  if (!member) throw notFound(`Member ${userId} of this analysis`);
  return member;
}

/** An analysis must keep a convener: someone has to review entries and approve unblinding. */
async function assertKeepsAConvener(ctx: AppContext, access: Access, member: { role: Member['role'] }, newRole: Member['role'] | null) {
  if (member.role === 'convener' && newRole !== 'convener' && (await countConveners(ctx.db, access.analysis.id)) <= 1)
    throw conflict('This is the analysis\u2019s only convener. Make someone else convener first.');
}

const actorOf = (access: Access) => ({ id: access.userId, name: access.userName, isAdmin: access.isAdmin });

/**
 * Writes a membership change with its line in the blinding log (while the analysis is not
 * unblinded) in one transaction, then tells the conveners when an admin changed their own.
 */
async function recordChange(ctx: AppContext, access: Access, change: MembershipChange, write: (tx: Tx) => Promise<unknown>, baseUrl: string) {
  await ctx.db.transaction(async (tx) => {
    await write(tx);
    await logMembershipChange(tx, access.analysis, actorOf(access), change);
  });
  await announceMembershipChange(ctx, access.analysis, actorOf(access), change, baseUrl);
}

/**
 * Adds an existing account as a member, granted by the caller; someone who is one already is
 * refused, naming their role.
 */
export async function addMembership(ctx: AppContext, access: Access, user: { id: number; name: string }, role: Member['role'], baseUrl: string) {
  const existing = await membershipRow(ctx.db, access.analysis.id, user.id);
  if (existing) throw conflict(`${user.name} is already a member (${existing.role}). Change their role instead.`);
  await recordChange(ctx, access, { kind: 'added', user, role }, (tx) => insertMembership(tx, { analysisId: access.analysis.id, userId: user.id, role, grantedById: access.userId }), baseUrl);
}

export async function addMember(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<Member> {
  const input = addMemberSchema.parse(body);
  const user = await findUserByEmail(ctx.db, input.email);
  if (!user) throw notFound(`An account with the e-mail ${input.email} (an admin creates accounts on the Accounts screen)`);
  await addMembership(ctx, access, user, input.role, baseUrl);
  return toMember(await findMember(ctx, access, user.id));
}

/** A new role is granted by the caller from now: a new convener approves only requests made after it. */
export async function changeRole(ctx: AppContext, access: Access, userId: number, body: unknown, baseUrl: string): Promise<Member> {
  const input = updateMemberSchema.parse(body);
  const member = await findMember(ctx, access, userId);
  await assertKeepsAConvener(ctx, access, member, input.role);
  if (member.role !== input.role)
    await recordChange(
      ctx,
      access,
      { kind: 'role', user: { id: userId, name: member.name }, from: member.role, role: input.role },
      (tx) => updateMembership(tx, access.analysis.id, userId, { role: input.role, roleSince: new Date(), grantedById: access.userId }),
      baseUrl,
    );
  return toMember(await findMember(ctx, access, userId));
}

export async function removeMember(ctx: AppContext, access: Access, userId: number, baseUrl: string): Promise<void> {
  const member = await findMember(ctx, access, userId);
  await assertKeepsAConvener(ctx, access, member, null);
  await recordChange(
    ctx,
    access,
    { kind: 'removed', user: { id: userId, name: member.name }, role: member.role },
    (tx) => deleteMembership(tx, access.analysis.id, userId),
    baseUrl,
  );
}
