import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
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
  // accounts change rarely; a copy of a few seconds spares the embedded database a query per request
  const recent = new Map<number, { user: Express.User | false; until: number }>();
  pp.deserializeUser(async (id: number, done) => {
    const copy = recent.get(id);
    if (copy && copy.until > Date.now()) return done(null, copy.user);
    try {
      const row = await findUserById(db, id);
      const user: Express.User | false = row ? { id: row.id, email: row.email, name: row.name, isAdmin: row.isAdmin } : false;
      if (recent.size > 5000) recent.clear();
      recent.set(id, { user, until: Date.now() + 5000 });
      done(null, user);
    } catch (e) {
      done(e);
    }
  });
  return pp;
}
