import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { toyRuns } from '../db/schema';
import { executeToys, threadToyExecutor, toyThreads, TOYS_INTERRUPTED } from '../work/toys';

/**
 * Runs toy runs (pseudo-experiments) in this process: one run at a time, its batches spread
 * over the toy threads. Like the fit runner: progress in the row, a run that was going when the
 * process stopped is marked failed at the next start, queued runs are picked up again.
 */
export type ToyRunner = {
  enqueue: (id: number) => void | Promise<void>;
  /** true when the run was queued or running and is now being cancelled */
  cancel: (id: number, by: string) => Promise<boolean>;
  recover: () => Promise<void>;
  idle: () => Promise<void>;
  close: () => Promise<void>;
};

export function createToyRunner(db: Db, log: (line: string) => void, options: { threads?: number; niceness?: number } = {}): ToyRunner {
  let threads: ReturnType<typeof toyThreads> | null = null;
  const pool = () => (threads ??= toyThreads(options.threads ?? 1, options.niceness ?? 0));
  const queue: number[] = [];
  const cancelled = new Map<number, string>();
  let current: { id: number; controller: AbortController } | null = null;
  let draining: Promise<void> | null = null;

  async function run(id: number) {
    const controller = new AbortController();
    current = { id, controller };
    try {
      await executeToys(db, id, threadToyExecutor(pool(), 'this server'), { signal: controller.signal, log, cancelledBy: () => cancelled.get(id) });
    } finally {
      current = null;
      cancelled.delete(id);
    }
  }
  function drain() {
    if (draining) return;
    draining = (async () => {
      while (queue.length) {
        const id = queue.shift()!;
        await run(id).catch((e) => log(`[toys ${id}] could not be run: ${e instanceof Error ? e.message : String(e)}`));
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
      await db.update(toyRuns).set({ state: 'cancelled', failure: `Cancelled by ${by} before it started.`, stage: 'cancelled', finishedAt: new Date() }).where(eq(toyRuns.id, id));
      return true;
    },
    recover: async () => {
      await db.update(toyRuns).set({ state: 'failed', failure: TOYS_INTERRUPTED, finishedAt: new Date(), stage: 'interrupted' }).where(eq(toyRuns.state, 'running'));
      const waiting = await db.select({ id: toyRuns.id }).from(toyRuns).where(eq(toyRuns.state, 'queued')).orderBy(toyRuns.id);
      for (const w of waiting) queue.push(w.id);
      if (queue.length) drain();
    },
    idle: async () => {
      while (draining) await draining;
    },
    close: async () => {
      queue.length = 0;
      current?.controller.abort();
      while (draining) await draining.catch(() => {});
      await threads?.close();
    },
  };
}
