import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import { untilNotified } from '../cache/change-notices';
import type { Db } from '../db/client';
import { findUserByEmail, findUserById } from '../db/users.repository';
import { DUMMY_HASH, verifyPassword } from './passwords';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface User {
      id: number;
      email: string;
      name: string;
      isAdmin: boolean;
    }
  }
}

/** One passport instance per app, so tests can run several apps side by side. */
export function createPassport(db: Db) {
  const pp = new passport.Passport();
  pp.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password' }, async (email, password, done) => {
      try {
        const user = await findUserByEmail(db, email.toLowerCase());
        const ok = await verifyPassword(password, user?.passwordHash ?? DUMMY_HASH);
        if (!user || !ok) return done(null, false);
        return done(null, { id: user.id, email: user.email, name: user.name, isAdmin: user.isAdmin });
      } catch (e) {
        return done(e);
      }
    }),
  );
  pp.serializeUser((user, done) => done(null, user.id));
  const copies = userCopies(db);
  pp.deserializeUser(async (id: number, done) => {
    try {
      done(null, await copies(id));
    } catch (e) {
      done(e);
    }
  });
  return pp;
}

/**
 * Every request asks who its session's user is. On the embedded database a copy of each user is
 * kept until the database announces a change to that user (a trigger in drizzle/0023, at commit,
 * before the writing query returns). With a PostgreSQL server other processes write too and notices
 * come after the commit, so a copy is trusted for a few seconds only.
 */
function userCopies(db: Db): (id: number) => Promise<Express.User | false> {
  const read = async (id: number): Promise<Express.User | false> => {
    const row = await findUserById(db, id);
    return row ? { id: row.id, email: row.email, name: row.name, isAdmin: row.isAdmin } : false;
  };
  if (db.$client.listen) {
    const notified = untilNotified(
      db.$client,
      'user_changed',
      () => new Map<number, Promise<Express.User | false>>(),
      (copies, id) => copies.delete(Number(id)),
    );
    return async (id) => {
      const copies = await notified;
      let copy = copies.get(id);
      if (!copy) {
        if (copies.size > 10_000) copies.clear();
        // kept before it is read, so that a change announced meanwhile drops it too
        copies.set(id, (copy = read(id)));
        copy.catch(() => copies.get(id) === copy && copies.delete(id));
      }
      return copy;
    };
  }
  const recent = new Map<number, { user: Express.User | false; until: number }>();
  return async (id) => {
    const copy = recent.get(id);
    if (copy && copy.until > Date.now()) return copy.user;
    const user = await read(id);
    if (recent.size > 5000) recent.clear();
    recent.set(id, { user, until: Date.now() + 5000 });
    return user;
  };
}
