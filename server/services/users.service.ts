import { createUserSchema, type Me, type User } from '@shared/schemas/api';
import { hashPassword } from '../auth/passwords';
import type { AppContext } from '../context';
import { membershipsOf } from '../db/analyses.repository';
import { findUserByEmail, insertUser, listUsers } from '../db/users.repository';
import { conflict } from '../errors';

export const listAccounts = (ctx: AppContext): Promise<User[]> => listUsers(ctx.db);

export async function createAccount(ctx: AppContext, body: unknown): Promise<User> {
  const input = createUserSchema.parse(body);
  if (await findUserByEmail(ctx.db, input.email)) throw conflict(`An account for ${input.email} already exists.`);
  return insertUser(ctx.db, { email: input.email, name: input.name, isAdmin: input.isAdmin, passwordHash: await hashPassword(input.password) });
}

/** The signed-in person with the analyses they belong to. */
export async function me(ctx: AppContext, user: Express.User): Promise<Me> {
  return { user, memberships: await membershipsOf(ctx.db, user.id) };
}
