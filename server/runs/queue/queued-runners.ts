import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fits } from '../../db/schema';
import { hypothesisScansTable, toyRunsTable, type JobTable } from '../run-rows';
import type { FitRunner } from '../fit-runner';
import type { ToyRunner } from '../toy-runner';
import type { HypothesisScanRunner } from '../hypothesis-scan-runner';
import { sweepLostCoordinators } from './heartbeat';
import { QUEUES, type Queue } from './queue';

/**
 * The server's side of queued work (PostgreSQL server): a fit, toy run or scan is put on the queue
 * and waits for a worker process; a cancellation is written to its row, which the coordinating
 * worker reads within a second. Nothing runs here but the per-parameter diagnosis, which
 * answers a request and keeps its own thread.
 */
function queuedRows(db: Db, queue: Queue, table: JobTable, name: string, data: (id: number) => object) {
  const open = inArray(table.state, ['queued', 'running']);
  return {
    enqueue: async (id: number) => {
      await db.update(table).set({ stage: 'waiting for a worker' }).where(and(eq(table.id, id), eq(table.state, 'queued')));
      await queue.send(name, data(id));
    },
    cancel: async (id: number, by: string) => {
      const rows = await db
        .update(table)
        .set({ state: 'cancelled', failure: sql`case when ${table.state} = 'queued' then ${`Cancelled by ${by} before it started.`} else ${`Cancelled by ${by}.`} end`, stage: 'cancelled', finishedAt: new Date() })
        .where(and(eq(table.id, id), open))
        .returning({ id: table.id });
      return rows.length > 0;
    },
    // the queue keeps queued work; runs whose worker stopped are failed by the sweep below
    recover: async () => {},
    idle: async () => {
      for (;;) {
        const [row] = await db.select({ n: sql<number>`count(*)::int` }).from(table).where(open);
        if (!row || row.n === 0) return;
        await new Promise((r) => setTimeout(r, 200));
      }
    },
  };
}

/**
 * Every SWEEP_MS the server fails the runs whose coordinating worker is no longer seen
 * (heartbeat.ts); the fit runner's recover() starts that watch and close() ends it.
 */
const SWEEP_MS = 10_000;

export function queuedFitRunner(db: Db, queue: Queue, local: FitRunner, log: (line: string) => void = console.error): FitRunner {
  let timer: NodeJS.Timeout | null = null;
  const sweep = () =>
    sweepLostCoordinators(db).then(
      (n) => n > 0 && log(`[queue] ${n} run(s) failed: their worker is no longer seen`),
      (e) => log(`[queue] could not check the workers: ${(e as Error).message}`),
    );
  return {
    ...queuedRows(db, queue, fits, QUEUES.fit, (fitId) => ({ fitId })),
    recover: async () => {
      await sweep();
      timer ??= setInterval(sweep, SWEEP_MS);
    },
    diagnose: local.diagnose,
    whatIf: local.whatIf,
    close: async () => {
      if (timer) clearInterval(timer);
      await local.close();
    },
  };
}

export function queuedToyRunner(db: Db, queue: Queue): ToyRunner {
  return { ...queuedRows(db, queue, toyRunsTable, QUEUES.toys, (toyRunId) => ({ toyRunId })), close: async () => {} };
}

export function queuedScanRunner(db: Db, queue: Queue): HypothesisScanRunner {
  return { ...queuedRows(db, queue, hypothesisScansTable, QUEUES.scan, (scanId) => ({ scanId })), close: async () => {} };
}
