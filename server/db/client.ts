import { closeSync, existsSync, mkdirSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { PGlite, types, type PGliteOptions } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import pg from 'pg';
import * as schema from './schema';

/**
 * What is asked of the database connection beside Drizzle: plain queries (the session store) and,
 * on the embedded database only, notices delivered before the writing query returns (the copies
 * kept in memory rely on that; see announcements.ts).
 */
export type DbClient = {
  query: <T = Record<string, unknown>>(text: string, params?: unknown[]) => Promise<{ rows: T[] }>;
  /** several statements, no parameters */
  exec: (text: string) => Promise<unknown>;
  listen?: PGlite['listen'];
};
/** Drizzle over either driver: the query builder both share (PgDatabase), with the connection as a DbClient. */
export type Db = PgDatabase<PgQueryResultHKT, typeof schema> & { $client: DbClient };
export type Database = {
  db: Db;
  client: DbClient;
  /** 'embedded': PGlite in this process; 'server': a PostgreSQL server at `url` */
  kind: 'embedded' | 'server';
  url: string | null;
  close: () => Promise<void>;
};

/** drizzle/ is resolved from the project root (the folder npm runs scripts in), also when bundled. */
export const projectRoot = process.env.PLUMBLINE_ROOT ?? process.cwd();

export class DataDirLockedError extends Error {}

function processAlive(pid: number) {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Two processes opening one PGlite folder corrupt it silently, so the server holds a lock
 * file beside it and refuses to start a second time on the same folder.
 */
function takeLock(lockFile: string) {
  if (existsSync(lockFile)) {
    const pid = Number(readFileSync(lockFile, 'utf8').trim());
    if (pid && pid !== process.pid && processAlive(pid))
      throw new DataDirLockedError(
        `Another Plumbline server (process ${pid}) is using the data folder ${path.dirname(lockFile)}. Stop it first, or set PLUMBLINE_DATA_DIR to another folder.`,
      );
    rmSync(lockFile, { force: true });
  }
  const fd = openSync(lockFile, 'wx');
  writeFileSync(fd, String(process.pid));
  closeSync(fd);
  return () => rmSync(lockFile, { force: true });
}

const MIGRATIONS_LOCK = 7_262_201;

/**
 * A PostgreSQL server (DATABASE_URL): the same schema and migrations through node-postgres. The
 * server, every worker and the command line may start together, so migrations run under an
 * advisory lock, one process at a time.
 */
export async function openServerDatabase(url: string, poolSize = 10): Promise<Database> {
  const pool = new pg.Pool({ connectionString: url, max: poolSize, application_name: 'plumbline' });
  // a connection that drops while idle (the server restarts, the network breaks) is dropped from
  // the pool and replaced at the next query; unhandled, its error would end the process
  pool.on('error', (e) => console.error(`[database] an idle connection failed: ${e.message}`));
  try {
    const connection = await pool.connect();
    try {
      await connection.query('select pg_advisory_lock($1)', [MIGRATIONS_LOCK]);
      await migratePg(drizzlePg(connection, { schema }), { migrationsFolder: path.join(projectRoot, 'drizzle') });
    } finally {
      await connection.query('select pg_advisory_unlock($1)', [MIGRATIONS_LOCK]).catch(() => {});
      connection.release();
    }
  } catch (e) {
    await pool.end();
    throw new DatabaseUnreachableError(`Plumbline cannot use the database at ${redacted(url)}: ${(e as Error).message}`);
  }
  const client: DbClient = {
    query: async <T,>(text: string, params?: unknown[]) => ({ rows: (await pool.query(text, params)).rows as T[] }),
    exec: (text) => pool.query(text),
  };
  const db: Db = Object.assign(drizzlePg(pool, { schema }), { $client: client });
  return { db, client, kind: 'server', url, close: () => pool.end() };
}

export class DatabaseUnreachableError extends Error {}

/** The address without its password, for messages and logs. */
export function redacted(url: string) {
  try {
    const u = new URL(url);
    if (u.password) u.password = '***';
    return u.toString();
  } catch {
    return '(an address that is not a URL)';
  }
}

/**
 * Bytes go to and from the embedded database as hex text. PGlite's own conversion makes a string
 * per byte (about a second of the request thread for the few megabytes of a large fit's stored
 * parts); Buffer's hex codec does the same in native code.
 */
export const pgliteOptions: PGliteOptions = {
  serializers: {
    [types.BYTEA]: (value: unknown) => {
      if (!(value instanceof Uint8Array)) throw new Error('Invalid input for bytea type');
      return `\\x${Buffer.from(value.buffer, value.byteOffset, value.byteLength).toString('hex')}`;
    },
  },
  parsers: { [types.BYTEA]: (text: string) => Buffer.from(text.slice(2), 'hex') },
};

/**
 * Opens the database: a PostgreSQL server when `url` is given, else PGlite in a folder (or in
 * memory when dataDir is undefined); applies migrations.
 */
export async function openDatabase(dataDir?: string, url?: string): Promise<Database> {
  if (url) return openServerDatabase(url);
  let release = () => {};
  let client: PGlite;
  if (dataDir) {
    mkdirSync(dataDir, { recursive: true });
    release = takeLock(path.join(dataDir, 'plumbline.lock'));
    client = new PGlite(path.join(dataDir, 'db'), pgliteOptions);
  } else {
    client = new PGlite(pgliteOptions);
  }
  try {
    const db = drizzle(client, { schema });
    await migrate(db, { migrationsFolder: path.join(projectRoot, 'drizzle') });
    return {
      db,
      client,
      kind: 'embedded',
      url: null,
      close: async () => {
        await client.close();
        release();
      },
    };
  } catch (e) {
    release();
    throw e;
  }
}
