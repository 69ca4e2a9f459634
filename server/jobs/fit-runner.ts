import { eq, inArray } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fits } from '../db/schema';
import type { Piscina } from 'piscina';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import type { ParameterDiagnosisNumbers } from '../fit/diagnosis';
import { siblingWorker, workerPool } from '../fit/pool';
import type { DiagnosisTask } from './diagnosis.worker';
import { executeFit, INTERRUPTED } from './execute-fit';
import { startJobThread, type JobThread } from './fit-job';

/**
 * Runs fit jobs off the request thread: one fit at a time, in a job thread (fit-job.ts) whose
 * engine spreads the refits over its worker pool. Progress is written to the fit's row (at most every 300 ms),
 * so any request, from any client, reads it. A job that was running when the process stopped
 * is marked failed with that reason at the next start; queued jobs are picked up again.
 */
export type FitRunner = {
  enqueue: (fitId: number) => void | Promise<void>;
  /** true when the fit was queued or running here and is now being cancelled */
  cancel: (fitId: number, by: string) => Promise<boolean>;
  recover: () => Promise<void>;
  /** resolves when the queue is empty and nothing runs */
  idle: () => Promise<void>;
  /** One parameter's diagnosis numbers, computed in a thread of their own (fits do not hold them up). */
  diagnose: (model: ExchangeModel, options: FitOptions, parameter: string) => Promise<ParameterDiagnosisNumbers>;
  close: () => Promise<void>;
};

export { INTERRUPTED, NOT_FINITE } from './execute-fit';

export function createFitRunner(db: Db, log: (line: string) => void, options: { threads?: number; niceness?: number } = {}): FitRunner {
  // the job thread (and the engine's refit threads in it) start with the first fit, not with the server
  let thread: JobThread | null = null;
  const jobs = () => (thread ??= startJobThread(options.threads, options.niceness));
  let diagnoses: Piscina | null = null;
  const diagnosisThread = () => (diagnoses ??= workerPool(siblingWorker(import.meta.url, 'diagnosis.worker'), { minThreads: 0, maxThreads: 1, idleTimeout: 5 * 60_000 }));
  const queue: number[] = [];
  const cancelled = new Map<number, string>();
  let current: { id: number; controller: AbortController } | null = null;
  let draining: Promise<void> | null = null;

  const finish = (id: number, values: Partial<typeof fits.$inferInsert>) => db.update(fits).set({ finishedAt: new Date(), ...values }).where(eq(fits.id, id));

  async function run(id: number) {
    const controller = new AbortController();
    current = { id, controller };
    try {
      await executeFit(db, id, (model, fitOptions, onProgress, signal) => jobs().run(model, fitOptions, onProgress, signal), {
        signal: controller.signal,
        log,
        cancelledBy: () => cancelled.get(id),
      });
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
        try {
          await run(id);
        } catch (e) {
          log(`[fit ${id}] could not be run: ${e instanceof Error ? e.message : String(e)}`);
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
      await finish(id, { state: 'cancelled', failure: `Cancelled by ${by} before it started.`, stage: 'cancelled' });
      return true;
    },
    recover: async () => {
      await db.update(fits).set({ state: 'failed', failure: INTERRUPTED, finishedAt: new Date(), stage: 'interrupted' }).where(eq(fits.state, 'running'));
      const waiting = await db.select({ id: fits.id }).from(fits).where(inArray(fits.state, ['queued'])).orderBy(fits.id);
      for (const w of waiting) queue.push(w.id);
      if (queue.length) drain();
    },
    idle: async () => {
      while (draining) await draining;
    },
    diagnose: async (model, fitOptions, parameter) =>
      (await diagnosisThread().run({ model, options: fitOptions, parameter, niceness: options.niceness ?? 0 } satisfies DiagnosisTask)) as ParameterDiagnosisNumbers,
    close: async () => {
      await diagnoses?.destroy();
      queue.length = 0;
      current?.controller.abort();
      while (draining) await draining.catch(() => {});
      await thread?.close();
    },
  };
}
