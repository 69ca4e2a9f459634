import { asc, eq } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { users } from './schema';

export const findUserByEmail = async (db: Db, email: string) => (await db.select().from(users).where(eq(users.email, email)))[0];
export const findUserById = async (db: Db, id: number) => (await db.select().from(users).where(eq(users.id, id)))[0];

export const listUsers = (db: Db) =>
  db.select({ id: users.id, email: users.email, name: users.name, isAdmin: users.isAdmin }).from(users).orderBy(asc(users.name));

export async function insertUser(db: DbOrTx, values: typeof users.$inferInsert) {
  const [row] = await db.insert(users).values(values).returning({ id: users.id, email: users.email, name: users.name, isAdmin: users.isAdmin });
  return row;
}

export const emailOfUser = async (db: Db, id: number) => (await db.select({ email: users.email }).from(users).where(eq(users.id, id)))[0]?.email;
