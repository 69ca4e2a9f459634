import { and, eq, isNotNull, lt, not, sql, type SQLWrapper } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { siblingWorker, workerPool } from '../threads/pool';
import { workClaims, workerProcesses, workInputs, workResults } from '../../db/schema';
import { JOB_TABLES } from '../run-rows';

/** A worker says it is alive this often, and is taken for gone after LOST_AFTER_SECONDS unseen. */
const BEAT_MS = 5000;
export const LOST_AFTER_SECONDS = 30;

/** True where the worker named by `name` (a column) has been seen within LOST_AFTER_SECONDS. */
export const seenRecently = (name: SQLWrapper) =>
  sql`exists (select 1 from ${workerProcesses} where ${workerProcesses.name} = ${name} and ${workerProcesses.seenAt} > now() - make_interval(secs => ${LOST_AFTER_SECONDS}))`;

/** Keeps this worker's row in worker_processes fresh, from a thread of its own; stop() removes it. */
export async function startHeartbeat(db: Db, url: string, name: string, threads: number) {
  await db.delete(workerProcesses).where(eq(workerProcesses.name, name));
  const thread = workerPool(siblingWorker(import.meta.url, 'heartbeat.worker'), { minThreads: 1, maxThreads: 1, idleTimeout: Infinity });
  void thread.run({ url, name, threads, everyMs: BEAT_MS }).catch(() => {});
  // the first beat is in before the worker takes any work
  for (let k = 0; k < 100; k++) {
    const [row] = await db.select({ name: workerProcesses.name }).from(workerProcesses).where(eq(workerProcesses.name, name));
    if (row) break;
    await new Promise((r) => setTimeout(r, 50));
  }
  return {
    stop: async () => {
      await thread.destroy();
      await db
        .delete(workerProcesses)
        .where(eq(workerProcesses.name, name))
        .catch(() => {});
    },
  };
}

/** The reason a run is failed with, around the worker's name. */
const LOST = ['The worker coordinating this run (', `) stopped or lost the database: it has not been seen for ${LOST_AFTER_SECONDS} s. Start it again; another worker will take it.`] as const;

/**
 * Fails the fits and toy runs whose coordinating worker is no longer seen (stopped, killed, or cut
 * off from the database), with a reason that says so, instead of leaving them running until the
 * queue's job expires. Returns how many rows it failed.
 */
export async function sweepLostCoordinators(db: Db): Promise<number> {
  let failed = 0;
  for (const table of JOB_TABLES) {
    const rows = await db
      .update(table)
      .set({ state: 'failed', failure: sql`${LOST[0]}::text || ${table.coordinatedBy} || ${LOST[1]}::text`, stage: 'worker lost', finishedAt: new Date() })
      .where(and(eq(table.state, 'running'), isNotNull(table.coordinatedBy), not(seenRecently(table.coordinatedBy))))
      .returning({ id: table.id });
    failed += rows.length;
  }
  // a run whose coordinator stopped leaves its shared input and outputs behind: kept a week, in
  // case a run is that long, then removed
  const week = sql`now() - interval '7 days'`;
  await db.delete(workInputs).where(lt(workInputs.createdAt, week));
  await db.delete(workResults).where(lt(workResults.finishedAt, week));
  await db.delete(workClaims).where(lt(workClaims.claimedAt, week));
  return failed;
}

/** A worker that is being stopped fails the runs it coordinates at once, rather than leaving them to the sweep. */
export async function failCoordinatedBy(db: Db, name: string) {
  for (const table of JOB_TABLES) {
    await db
      .update(table)
      .set({ state: 'failed', failure: `The worker coordinating this run (${name}) was stopped. Start it again; another worker will take it.`, stage: 'worker stopped', finishedAt: new Date() })
      .where(and(eq(table.state, 'running'), eq(table.coordinatedBy, name)));
  }
}
