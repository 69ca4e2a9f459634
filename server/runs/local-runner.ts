import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { cancelQueuedRow, type JobTable } from './run-rows';

/** What both in-process runners offer the services. */
export type LocalRunner = {
  enqueue: (id: number) => void;
  /** true when the job was queued or running here and is now being cancelled */
  cancel: (id: number, by: string) => Promise<boolean>;
  recover: () => Promise<void>;
  /** resolves when the queue is empty and nothing runs */
  idle: () => Promise<void>;
  /** stops taking jobs, cancels the one running and waits for it to end */
  stop: () => Promise<void>;
};

/** What the services see of a runner of one kind of job (toy runs, scans over hypotheses). */
export type JobRunner = {
  enqueue: (id: number) => void | Promise<void>;
  /** true when the job was queued or running and is now being cancelled */
  cancel: (id: number, by: string) => Promise<boolean>;
  recover: () => Promise<void>;
  /** resolves when the queue is empty and nothing runs */
  idle: () => Promise<void>;
  close: () => Promise<void>;
};

/**
 * Runs jobs of one table in this process, one at a time, in the order asked. A job that was
 * running when the process stopped is marked failed with `interrupted` at the next start; queued
 * ones are picked up again. `run` gets a signal that a cancellation aborts, and the name of who
 * cancelled.
 */
export function localRunner(
  db: Db,
  table: JobTable,
  run: (id: number, signal: AbortSignal, cancelledBy: () => string | undefined) => Promise<void>,
  options: { interrupted: string; what: string; log: (line: string) => void },
): LocalRunner {
  const queue: number[] = [];
  const cancelled = new Map<number, string>();
  let current: { id: number; controller: AbortController } | null = null;
  let draining: Promise<void> | null = null;

  function drain() {
    if (draining) return;
    draining = (async () => {
      while (queue.length) {
        const id = queue.shift()!;
        const controller = new AbortController();
        current = { id, controller };
        try {
          await run(id, controller.signal, () => cancelled.get(id));
        } catch (e) {
          options.log(`[${options.what} ${id}] could not be run: ${e instanceof Error ? e.message : String(e)}`);
        } finally {
          current = null;
          cancelled.delete(id);
        }
      }
      draining = null;
    })();
  }

  return {
    enqueue: (id) => {
      queue.push(id);
      drain();
    },
    cancel: async (id, by) => {
      if (current?.id === id) {
        cancelled.set(id, by);
        current.controller.abort();
        return true;
      }
      const at = queue.indexOf(id);
      if (at < 0) return false;
      queue.splice(at, 1);
      await cancelQueuedRow(db, table, id, by);
      return true;
    },
    recover: async () => {
      await db.update(table).set({ state: 'failed', failure: options.interrupted, finishedAt: new Date(), stage: 'interrupted' }).where(eq(table.state, 'running'));
      const waiting = await db.select({ id: table.id }).from(table).where(eq(table.state, 'queued')).orderBy(table.id);
      for (const w of waiting) queue.push(w.id);
      if (queue.length) drain();
    },
    idle: async () => {
      while (draining) await draining;
    },
    stop: async () => {
      queue.length = 0;
      current?.controller.abort();
      while (draining) await draining.catch(() => {});
    },
  };
}

/**
 * A job coordinated elsewhere than the server that was asked to cancel it: the server writes the
 * cancellation to the row, and the coordinator reads the row every second. Returns the signal
 * that aborts then, and a stop for the watch.
 */
export function abortWhenCancelled(db: Db, table: JobTable, id: number) {
  const controller = new AbortController();
  const watch = setInterval(async () => {
    try {
      const [row] = await db.select({ state: table.state }).from(table).where(eq(table.id, id));
      if (!row || row.state === 'cancelled') controller.abort();
    } catch {
      // the next check will tell
    }
  }, 1000);
  return { signal: controller.signal, stop: () => clearInterval(watch) };
}

/** After a cancellation: the engine checks between steps, so wait briefly (at most 10 s) for the job to stop. */
export async function untilStopped<T>(read: () => Promise<T>, running: (row: T) => boolean): Promise<T> {
  let row = await read();
  for (let waited = 0; running(row) && waited < 10_000; waited += 50) {
    await new Promise((r) => setTimeout(r, 50));
    row = await read();
  }
  return row;
}
