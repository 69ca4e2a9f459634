import type { RequestHandler } from 'express';
import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import type { DbClient } from '../db/client';
import type { Config } from '../config';

const PgStore = connectPgSimple(session);
type Callback = (err?: unknown, value?: session.SessionData | null) => void;

/**
 * Sessions live in the database (table "session", created by our migrations), so they survive
 * a restart. connect-pg-simple wants a pg pool; PGlite answers the same query(text, params) call.
 *
 * The embedded database answers one query at a time, so reads are served from memory: every
 * write and destroy goes to the database first and then updates the copy, and a copy is
 * trusted for at most a minute. Sessions expire 8 hours after sign-in (no per-request touch).
 */
class CachedStore extends PgStore {
  private readonly copies = new Map<string, { json: string; expires: number; until: number }>();
  private static readonly TTL_MS = 60_000;
  private static readonly MAX = 5000;

  override get(sid: string, callback: Callback) {
    const copy = this.copies.get(sid);
    // each request gets its own copy to change: parsed from the kept JSON (cheaper than a structured clone)
    if (copy && copy.until > Date.now() && copy.expires > Date.now()) return callback(null, JSON.parse(copy.json));
    super.get(sid, (err, data) => {
      if (!err && data) this.keep(sid, data);
      callback(err, data);
    });
  }
  override set(sid: string, data: session.SessionData, callback?: (err?: unknown) => void) {
    super.set(sid, data, (err) => {
      if (err) this.copies.delete(sid);
      else this.keep(sid, data);
      callback?.(err);
    });
  }
  override destroy(sid: string, callback?: (err?: unknown) => void) {
    this.copies.delete(sid);
    super.destroy(sid, callback);
  }
  private keep(sid: string, data: session.SessionData) {
    if (this.copies.size >= CachedStore.MAX) this.copies.delete(this.copies.keys().next().value!);
    this.copies.set(sid, { json: JSON.stringify(data), expires: new Date(data.cookie.expires ?? 8.64e15).getTime(), until: Date.now() + CachedStore.TTL_MS });
  }
}

/**
 * On a PostgreSQL server several processes may serve requests, so each read goes to the database
 * (a sign-out in one process holds in all); the embedded database keeps the copies above.
 */
export function sessionMiddleware(client: DbClient, config: Config): RequestHandler {
  const pool = { query: (text: string, params?: unknown[]) => client.query(text, params) };
  const Store = client.listen ? CachedStore : PgStore;
  return session({
    name: 'plumbline.sid',
    secret: config.sessionSecret,
    store: new Store({ pool: pool as never, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60, disableTouch: true }),
    resave: false,
    saveUninitialized: false,
    rolling: false,
    cookie: { httpOnly: true, sameSite: 'lax', secure: config.secureCookies, maxAge: 8 * 60 * 60 * 1000 },
  });
}
