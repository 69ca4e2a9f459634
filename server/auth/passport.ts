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
  pp.deserializeUser(async (id: number, done) => {
    try {
      const user = await findUserById(db, id);
      done(null, user ? { id: user.id, email: user.email, name: user.name, isAdmin: user.isAdmin } : false);
    } catch (e) {
      done(e);
    }
  });
  return pp;
}
