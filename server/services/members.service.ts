import { and, eq } from 'drizzle-orm';
import { addMemberSchema, updateMemberSchema, type Member } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { countConveners, listMembers as listMemberRows } from '../db/analyses.repository';
import { memberships } from '../db/schema';
import { findUserByEmail } from '../db/users.repository';
import { conflict, notFound } from '../errors';

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

/** Adds an existing account as a member; someone who is one already is refused, naming their role. */
export async function addMembership(ctx: AppContext, access: Access, user: { id: number; name: string }, role: Member['role']) {
  const [existing] = await ctx.db.select().from(memberships).where(and(eq(memberships.analysisId, access.analysis.id), eq(memberships.userId, user.id)));
  if (existing) throw conflict(`${user.name} is already a member (${existing.role}). Change their role instead.`);
  await ctx.db.insert(memberships).values({ analysisId: access.analysis.id, userId: user.id, role });
}

export async function addMember(ctx: AppContext, access: Access, body: unknown): Promise<Member> {
  const input = addMemberSchema.parse(body);
  const user = await findUserByEmail(ctx.db, input.email);
  if (!user) throw notFound(`An account with the e-mail ${input.email} (an admin creates accounts on the Accounts screen)`);
  await addMembership(ctx, access, user, input.role);
  return toMember(await findMember(ctx, access, user.id));
}

export async function changeRole(ctx: AppContext, access: Access, userId: number, body: unknown): Promise<Member> {
  const input = updateMemberSchema.parse(body);
  const member = await findMember(ctx, access, userId);
  await assertKeepsAConvener(ctx, access, member, input.role);
  await ctx.db
    .update(memberships)
    .set({ role: input.role })
    .where(and(eq(memberships.analysisId, access.analysis.id), eq(memberships.userId, userId)));
  return toMember(await findMember(ctx, access, userId));
}

export async function removeMember(ctx: AppContext, access: Access, userId: number): Promise<void> {
  const member = await findMember(ctx, access, userId);
  await assertKeepsAConvener(ctx, access, member, null);
  await ctx.db.delete(memberships).where(and(eq(memberships.analysisId, access.analysis.id), eq(memberships.userId, userId)));
}
