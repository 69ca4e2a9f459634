import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '../../db/client';
import { fits, hypothesisScans } from '../../db/schema';
import { FitCancelledError } from '../../fit';
import { executeFit, readFitInput } from '../execute-fit';
import { abortWhenCancelled } from '../local-runner';
import { JobError } from '../threads/fit-thread';
import { fitOutcome } from '../fit-outcome';
import { ShardFailedError, type Queue } from './queue';
import { queuedFitPool } from './queued-pool';
import { executeScan } from '../hypothesis-scan-runner';
import { scanOutcome, type scanToyThreads } from '../scan-outcome';
import { hypothesisScansTable } from '../run-rows';

/**
 * A fit taken from the queue by a worker: the serial part (the minimum, its covariance, the
 * Asimov fits) runs here; the refits go back to the queue as shards for every worker. The worker
 * checks the fit's row every second, so a cancellation from the server stops it.
 */
export async function coordinateFit(db: Db, queue: Queue, fitId: number, log: (line: string) => void, worker: string) {
  const watch = abortWhenCancelled(db, fits, fitId);
  const workers: Record<string, number> = {};
  try {
    await executeFit(
      db,
      fitId,
      async (input, onInput, onProgress, signal) => {
        const { model, options, inputSha256 } = readFitInput(input);
        onInput(inputSha256);
        const pool = queuedFitPool(db, queue, `fit:${fitId}:${randomUUID()}`, (worker) => (workers[worker] = (workers[worker] ?? 0) + 1));
        try {
          const outcome = await fitOutcome(model, options, { pool, onProgress, signal });
          if (!outcome.ok) throw new JobError(outcome.kind, outcome.message);
          return outcome.stored;
        } catch (e) {
          if (e instanceof FitCancelledError || signal.aborted) throw new JobError('cancelled', 'cancelled');
          if (e instanceof ShardFailedError) throw new JobError('shards', e.message);
          throw e;
        } finally {
          if (Object.keys(workers).length) await db.update(fits).set({ workers }).where(eq(fits.id, fitId));
        }
      },
      { signal: watch.signal, log, cancelledBy: () => undefined, coordinator: worker },
    );
  } finally {
    watch.stop();
  }
}

/**
 * A scan over signal hypotheses taken from the queue by a worker: the hypotheses' own fits run
 * here, their refits go back to the queue as shards for every worker (as a fit's do), and the
 * toys of its global significance run on this worker's toy threads. Cancellation as for a fit.
 */
export async function coordinateScan(db: Db, queue: Queue, scanId: number, toys: { threads: number; pool: () => ReturnType<typeof scanToyThreads> }, log: (line: string) => void, worker: string) {
  const watch = abortWhenCancelled(db, hypothesisScansTable, scanId);
  const workers: Record<string, number> = {};
  try {
    await executeScan(
      db,
      scanId,
      async (model, options, onProgress, signal) => {
        const pool = queuedFitPool(db, queue, `scan:${scanId}:${randomUUID()}`, (w) => (workers[w] = (workers[w] ?? 0) + 1));
        try {
          return await scanOutcome(model, options, { pool, toys: toys.pool, toyThreads: toys.threads, onProgress, signal });
        } finally {
          if (Object.keys(workers).length) await db.update(hypothesisScans).set({ workers }).where(eq(hypothesisScans.id, scanId));
        }
      },
      { signal: watch.signal, log, cancelledBy: () => undefined, coordinator: worker },
    );
  } finally {
    watch.stop();
  }
}
