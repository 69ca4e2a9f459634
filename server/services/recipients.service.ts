import type { MemberRole } from '@shared/permissions';
import type { AppContext } from '../context';
import { memberEmails } from '../db/analyses.repository';
import { emailOfUser } from '../db/users.repository';

/**
 * Who an e-mail goes to, for the services that send them (mail/notifications.ts writes the
 * messages and never looks anyone up): members by role, one person, and the audience of a step
 * less the person who took it (they know).
 */
export const withRoles = (ctx: AppContext, analysisId: number, ...roles: MemberRole[]) => memberEmails(ctx.db, analysisId, roles);

export async function personal(ctx: AppContext, userId: number | null): Promise<string[]> {
  if (!userId) return [];
  const email = await emailOfUser(ctx.db, userId);
  return email ? [email] : [];
}

/** Everyone on the lists, once each, less the person who acted. */
export async function audience(ctx: AppContext, actorId: number, lists: (string[] | Promise<string[]>)[]): Promise<string[]> {
  const [actor] = await personal(ctx, actorId);
  return [...new Set((await Promise.all(lists)).flat())].filter((e) => e !== actor);
}
