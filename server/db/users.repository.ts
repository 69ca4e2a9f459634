import { asc, eq } from 'drizzle-orm';
import { untilNotified } from '../cache/change-notices';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { users } from './schema';

export const findUserByEmail = async (db: Db, email: string) => (await db.select().from(users).where(eq(users.email, email)))[0];

export const listUsers = (db: Db) =>
  db.select({ id: users.id, email: users.email, name: users.name, isAdmin: users.isAdmin }).from(users).orderBy(asc(users.name));

export async function insertUser(db: DbOrTx, values: typeof users.$inferInsert) {
  const [row] = await db.insert(users).values(values).returning({ id: users.id, email: users.email, name: users.name, isAdmin: users.isAdmin });
  return row;
}

export const emailOfUser = async (db: Db, id: number) => (await knownUser(db, id))?.email;

/** Who a user is, as a session and a message see them. */
export type KnownUser = { id: number; email: string; name: string; isAdmin: boolean };

/**
 * Every request asks who its session's user is, and every notice whom it goes to. On the embedded
 * database a copy of each user is kept until the database announces a change to that user (a
 * trigger in drizzle/0023, at commit, before the writing query returns); with a PostgreSQL server
 * other processes write too, and each call reads the database.
 */
const userCopies = (db: Db) =>
  untilNotified(
    db.$client,
    'user_changed',
    () => new Map<number, Promise<KnownUser | undefined>>(),
    (copies, id) => copies.delete(Number(id)),
  );

export async function knownUser(db: Db, id: number): Promise<KnownUser | undefined> {
  const copies = await userCopies(db);
  let copy = copies.get(id);
  if (!copy) {
    if (copies.size > 10_000) copies.clear();
    // kept before it is read, so that a change announced meanwhile drops it too
    copies.set(id, (copy = db.select({ id: users.id, email: users.email, name: users.name, isAdmin: users.isAdmin }).from(users).where(eq(users.id, id)).then((rows) => rows[0])));
    copy.catch(() => copies.get(id) === copy && copies.delete(id));
  }
  return copy;
}
