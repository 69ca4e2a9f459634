import { closeSync, existsSync, mkdirSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { drizzle, type PgliteDatabase } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import * as schema from './schema';

export type Db = PgliteDatabase<typeof schema> & { $client: PGlite };
export type Database = { db: Db; client: PGlite; close: () => Promise<void> };

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

/** Opens the database (a folder, or in memory when dataDir is undefined) and applies migrations. */
export async function openDatabase(dataDir?: string): Promise<Database> {
  let release = () => {};
  let client: PGlite;
  if (dataDir) {
    mkdirSync(dataDir, { recursive: true });
    release = takeLock(path.join(dataDir, 'plumbline.lock'));
    client = new PGlite(path.join(dataDir, 'db'));
  } else {
    client = new PGlite();
  }
  try {
    const db = drizzle(client, { schema });
    await migrate(db, { migrationsFolder: path.join(projectRoot, 'drizzle') });
    return {
      db,
      client,
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
