import type { RequestHandler } from 'express';
import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import type { PGlite } from '@electric-sql/pglite';
import type { Config } from '../config';

const PgStore = connectPgSimple(session);

/**
 * Sessions live in the database (table "session", created by our migrations), so they survive
 * a restart. connect-pg-simple wants a pg pool; PGlite answers the same query(text, params) call.
 */
export function sessionMiddleware(client: PGlite, config: Config): RequestHandler {
  const pool = { query: (text: string, params?: unknown[]) => client.query(text, params) };
  return session({
    name: 'plumbline.sid',
    secret: config.sessionSecret,
    store: new PgStore({ pool: pool as never, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 }),
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: { httpOnly: true, sameSite: 'lax', secure: config.secureCookies, maxAge: 8 * 60 * 60 * 1000 },
  });
}
