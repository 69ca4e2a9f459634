import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import type { Db } from '../db/client';
import { findUserByEmail, knownUser } from '../db/users.repository';
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
 * Who a session's user is: on the embedded database the copy users.repository keeps until that user
 * changes; with a PostgreSQL server (where every read goes to the database) a copy of a few seconds
 * spares a query per request.
 */
function userCopies(db: Db): (id: number) => Promise<Express.User | false> {
  const read = async (id: number): Promise<Express.User | false> => {
    const user = await knownUser(db, id);
    return user ? { id: user.id, email: user.email, name: user.name, isAdmin: user.isAdmin } : false;
  };
  if (db.$client.listen) return read;
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
