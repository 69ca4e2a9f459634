import { and, eq, isNotNull, lt, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { siblingWorker, workerPool } from '../fit/pool';
import { fits, toyRuns, workClaims, workerProcesses, workInputs, workResults } from '../db/schema';

/** A worker says it is alive this often, and is taken for gone after LOST_AFTER_SECONDS unseen. */
const BEAT_MS = 5000;
export const LOST_AFTER_SECONDS = 30;

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

const lost = (by: string) =>
  `The worker coordinating this run (${by}) stopped or lost the database: it has not been seen for ${LOST_AFTER_SECONDS} s. Start it again; another worker will take it.`;

/**
 * Fails the fits and toy runs whose coordinating worker is no longer seen (stopped, killed, or cut
 * off from the database), with a reason that says so, instead of leaving them running until the
 * queue's job expires. Returns how many rows it failed.
 */
export async function sweepLostCoordinators(db: Db): Promise<number> {
  let failed = 0;
  for (const table of [fits, toyRuns as unknown as typeof fits]) {
    const gone = sql`not exists (select 1 from ${workerProcesses} where ${workerProcesses.name} = ${table.coordinatedBy} and ${workerProcesses.seenAt} > now() - make_interval(secs => ${LOST_AFTER_SECONDS}))`;
    const rows = await db
      .select({ id: table.id, by: table.coordinatedBy })
      .from(table)
      .where(and(eq(table.state, 'running'), isNotNull(table.coordinatedBy), gone));
    for (const row of rows) {
      const done = await db
        .update(table)
        .set({ state: 'failed', failure: lost(row.by!), stage: 'worker lost', finishedAt: new Date() })
        .where(and(eq(table.id, row.id), eq(table.state, 'running')))
        .returning({ id: table.id });
      failed += done.length;
    }
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
  for (const table of [fits, toyRuns as unknown as typeof fits]) {
    await db
      .update(table)
      .set({ state: 'failed', failure: `The worker coordinating this run (${name}) was stopped. Start it again; another worker will take it.`, stage: 'worker stopped', finishedAt: new Date() })
      .where(and(eq(table.state, 'running'), eq(table.coordinatedBy, name)));
  }
}
