import { eq, inArray } from 'drizzle-orm';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitOptionsSchema } from '@shared/schemas/fit';
import type { Db } from '../db/client';
import { fits, modelVersions } from '../db/schema';
import type { Piscina } from 'piscina';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import type { ParameterDiagnosisNumbers } from '../fit/diagnosis';
import { siblingWorker, workerPool } from '../fit/pool';
import type { DiagnosisTask } from './diagnosis.worker';
import { JobError, startJobThread, type JobThread } from './fit-job';

/**
 * Runs fit jobs off the request thread: one fit at a time, in a job thread (fit-job.ts) whose
 * engine spreads the refits over its worker pool. Progress is written to the fit's row (at most every 300 ms),
 * so any request, from any client, reads it. A job that was running when the process stopped
 * is marked failed with that reason at the next start; queued jobs are picked up again.
 */
export type FitRunner = {
  enqueue: (fitId: number) => void;
  /** true when the fit was queued or running here and is now being cancelled */
  cancel: (fitId: number, by: string) => Promise<boolean>;
  recover: () => Promise<void>;
  /** resolves when the queue is empty and nothing runs */
  idle: () => Promise<void>;
  /** One parameter's diagnosis numbers, computed in a thread of their own (fits do not hold them up). */
  diagnose: (model: ExchangeModel, options: FitOptions, parameter: string) => Promise<ParameterDiagnosisNumbers>;
  close: () => Promise<void>;
};

export const NOT_FINITE =
  'The fit ended with a number that is not finite (NaN or infinite), so none of its numbers are shown. Check the model for extreme yields or variations, and tell an admin.';

export const INTERRUPTED = 'Interrupted: the server stopped while this fit was running. Start it again.';

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
    const [fit] = await db.select().from(fits).where(eq(fits.id, id));
    if (!fit || fit.state !== 'queued') return;
    const [version] = await db.select().from(modelVersions).where(eq(modelVersions.id, fit.modelVersionId));
    const controller = new AbortController();
    current = { id, controller };
    await db.update(fits).set({ state: 'running', startedAt: new Date(), progress: 0, stage: 'starting' }).where(eq(fits.id, id));

    // progress writes are chained so that a late one never overwrites the final state
    let writes = Promise.resolve();
    let last = 0;
    const onProgress = (fraction: number, stage: string) => {
      const now = Date.now();
      if (now - last < 300) return;
      last = now;
      writes = writes.then(() => db.update(fits).set({ progress: Math.min(0.99, fraction), stage }).where(eq(fits.id, id))).then(
        () => {},
        () => {},
      );
    };
    try {
      const model = exchangeModelSchema.parse(version.model);
      const result = await jobs().run(model, fitOptionsSchema.parse(fit.options), onProgress, controller.signal);
      await writes;
      await finish(id, {
        state: result.status === 'converged' ? 'succeeded' : 'failed',
        failure: result.status === 'converged' ? null : (result.convergence.failure ?? 'The fit did not converge.'),
        result,
        headline:
          result.status === 'converged' && result.summary
            ? { mu: result.summary.mu.value, muError: result.summary.mu.error, z: result.summary.discovery?.z ?? null, warnings: result.convergence.warnings.length }
            : null,
        progress: 1,
        stage: 'done',
      });
    } catch (e) {
      await writes;
      const kind = e instanceof JobError ? e.kind : 'internal';
      if (kind === 'cancelled') await finish(id, { state: 'cancelled', failure: `Cancelled by ${cancelled.get(id) ?? 'a user'}.`, stage: 'cancelled' });
      else if (kind === 'input') await finish(id, { state: 'failed', failure: `The model or options cannot be fitted: ${(e as Error).message}`, stage: 'failed' });
      else if (kind === 'numeric') {
        log(`[fit ${id}] non-finite result: ${(e as Error).message}`);
        await finish(id, { state: 'failed', failure: `${NOT_FINITE} First at: ${(e as Error).message}.`, stage: 'failed' });
      }
      else {
        log(`[fit ${id}] ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
        await finish(id, { state: 'failed', failure: 'The fit stopped on an internal error; it has been logged. Try again, and tell an admin if it persists.', stage: 'failed' });
      }
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
