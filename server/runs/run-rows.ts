import { and, eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fits, hypothesisScans, toyRuns } from '../db/schema';
import { conflict } from '../errors';

/**
 * Rows that run as jobs (a job is one fit, one toy run or one scan over hypotheses, queued, run and
 * finished): they share their id, state, progress, stage, failure, times and coordinator.
 */
export type JobTable = typeof fits | typeof toyRuns | typeof hypothesisScans;
export const JOB_TABLES: readonly JobTable[] = [fits, toyRuns, hypothesisScans];
export const toyRunsTable: JobTable = toyRuns;
export const fitsTable: JobTable = fits;
export const hypothesisScansTable: JobTable = hypothesisScans;

type JobValues = Partial<typeof fits.$inferInsert> & Partial<typeof toyRuns.$inferInsert> & Partial<typeof hypothesisScans.$inferInsert>;

/**
 * One job's row while it runs, wherever it runs: `start` takes it from queued to running (false
 * when it was not queued any more); `progress` writes at most every 300 ms, in order, so a late
 * write never overwrites the end; `finish` writes the end only while the row is still running,
 * so a cancellation recorded meanwhile (from another process) stands.
 */
export function jobRow(db: Db, table: JobTable, id: number) {
  const running = and(eq(table.id, id), eq(table.state, 'running'));
  let writes = Promise.resolve();
  let last = 0;
  return {
    start: async (values: JobValues) => {
      const rows = await db
        .update(table)
        .set({ state: 'running', startedAt: new Date(), progress: 0, failure: null, ...values })
        .where(and(eq(table.id, id), eq(table.state, 'queued')))
        .returning({ id: table.id });
      return rows.length > 0;
    },
    progress: (fraction: number, stage: string) => {
      const now = Date.now();
      if (now - last < 300) return;
      last = now;
      writes = writes
        .then(() => db.update(table).set({ progress: Math.min(0.99, fraction), stage }).where(running))
        .then(
          () => {},
          () => {},
        );
    },
    /** True when the end was written (the row was still running). */
    finish: async (values: JobValues) => {
      await writes;
      const rows = await db
        .update(table)
        .set({ finishedAt: new Date(), ...values })
        .where(running)
        .returning({ id: table.id });
      return rows.length > 0;
    },
  };
}

/** A job still queued is cancelled in its row alone (nothing has started). True when it was. */
export async function cancelQueuedRow(db: Db, table: JobTable, id: number, by: string) {
  const rows = await db
    .update(table)
    .set({ state: 'cancelled', failure: `Cancelled by ${by} before it started.`, stage: 'cancelled', finishedAt: new Date() })
    .where(and(eq(table.id, id), eq(table.state, 'queued')))
    .returning({ id: table.id });
  return rows.length > 0;
}

/**
 * A cancellation asked of the server: the runner cancels what it holds (a job queued or running
 * here, or any job when the work is queued in the database); a job queued by another server
 * process is cancelled in its row; one running in another server process cannot be reached.
 */
export async function cancelJob(
  db: Db,
  table: JobTable,
  runner: { cancel: (id: number, by: string) => Promise<boolean> },
  job: { id: number; state: string; what: string },
  by: string,
) {
  if (await runner.cancel(job.id, by)) return;
  if (job.state === 'running') throw conflict(`${job.what} is running in another server process; it cannot be cancelled from here.`);
  await cancelQueuedRow(db, table, job.id, by);
}
