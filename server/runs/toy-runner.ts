import type { Db } from '../db/client';
import { toyRunsTable } from './run-rows';
import { localRunner, type JobRunner } from './local-runner';
import { executeToys, threadToyExecutor, toyThreads, TOYS_INTERRUPTED } from './toys';

/**
 * Runs toy runs (pseudo-experiments) in this process: one run at a time, its batches spread
 * over the toy threads. Like the fit runner: progress in the row, a run that was going when the
 * process stopped is marked failed at the next start, queued runs are picked up again.
 */
export type ToyRunner = JobRunner;

export function createToyRunner(db: Db, log: (line: string) => void, options: { threads?: number; niceness?: number } = {}): ToyRunner {
  let threads: ReturnType<typeof toyThreads> | null = null;
  const pool = () => (threads ??= toyThreads(options.threads ?? 1, options.niceness ?? 0));
  const runner = localRunner(
    db,
    toyRunsTable,
    (id, signal, cancelledBy) => executeToys(db, id, threadToyExecutor(pool(), 'this server'), { signal, log, cancelledBy }),
    { interrupted: TOYS_INTERRUPTED, what: 'toys', log },
  );
  return {
    enqueue: runner.enqueue,
    cancel: runner.cancel,
    recover: runner.recover,
    idle: runner.idle,
    close: async () => {
      await runner.stop();
      await threads?.close();
    },
  };
}
