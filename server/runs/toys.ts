import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { exchangeModelSchema, type ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptions } from '@shared/schemas/fit';
import { toyHypothesisSchema, toySummarySchema, type ToyHypothesis } from '@shared/schemas/toys';
import type { Db } from '../db/client';
import { fits, modelVersions, toyRuns } from '../db/schema';
import { threadEntry, workerPool } from './threads/pool';
import { FitCancelledError, FitInputError, summariseToys, type ToyOutcome, type ToyPlan, type ToyTask } from '../fit';
import { jobRow, toyRunsTable } from './run-rows';
import { abortWhenCancelled } from './local-runner';
import { QUEUES, runSharded, ShardFailedError, type Queue } from './queue/queue';

/** Toys per batch: a batch is the unit a thread or a worker takes; the numbers do not depend on it. */
export const TOYS_PER_BATCH = 25;

export function toyBatches(count: number): number[][] {
  const batches: number[][] = [];
  for (let first = 0; first < count; first += TOYS_PER_BATCH) batches.push(Array.from({ length: Math.min(TOYS_PER_BATCH, count - first) }, (_, k) => first + k));
  return batches;
}

/** What a batch needs besides its toy indices: the same for every batch of a run. */
export type ToyInput = Omit<ToyTask, 'indices'>;

/** How a run's plan is made and its batches run: threads of this process, or the queue. */
export type ToyExecutor = {
  prepare: (model: ExchangeModel, options: FitOptions, hypothesis: ToyHypothesis, signal: AbortSignal) => Promise<ToyPlan>;
  runBatches: (input: ToyInput, batches: number[][], onBatch: (toys: number, worker: string) => void, signal: AbortSignal) => Promise<ToyOutcome[][]>;
};

export const TOYS_INTERRUPTED = 'Interrupted: the server stopped while these toys were running. Ask for them again.';

/**
 * One toy run from its row to its stored summary: the fit's model and options, the plan (the
 * reference fit refitted, the generation point), the batches, then the summary. Progress is the
 * toys done over the toys asked for; the row's lifecycle is jobRow's.
 */
export async function executeToys(
  db: Db,
  id: number,
  executor: ToyExecutor,
  control: { signal: AbortSignal; log: (line: string) => void; cancelledBy: () => string | undefined; coordinator?: string },
) {
  const { signal, log } = control;
  const [run] = await db.select().from(toyRuns).where(eq(toyRuns.id, id));
  if (!run || run.state !== 'queued') return;
  const row = jobRow(db, toyRunsTable, id);
  if (!(await row.start({ stage: 'refitting the reference', coordinatedBy: control.coordinator ?? null }))) return;
  const workers: Record<string, number> = {};
  const finish = (values: Partial<typeof toyRuns.$inferInsert>) => row.finish({ ...values, workers });
  try {
    const [fit] = await db.select({ options: fits.options, versionId: fits.modelVersionId, state: fits.state }).from(fits).where(eq(fits.id, run.fitId));
    if (!fit || fit.state !== 'succeeded') throw new FitInputError('the fit these toys belong to has no converged result any more');
    const [version] = await db.select({ model: modelVersions.model }).from(modelVersions).where(eq(modelVersions.id, fit.versionId));
    const model = exchangeModelSchema.parse(version.model);
    const options = fitOptionsSchema.parse(fit.options);
    const plan = await executor.prepare(model, options, toyHypothesisSchema.parse(run.hypothesis), signal);
    if (signal.aborted) throw new FitCancelledError();

    let done = 0;
    const onBatch = (toys: number, worker: string) => {
      done += toys;
      workers[worker] = (workers[worker] ?? 0) + 1;
      row.progress(done / run.count, `${done} of ${run.count} toys`);
    };
    await db.update(toyRuns).set({ stage: `0 of ${run.count} toys` }).where(eq(toyRuns.id, id));
    const input: ToyInput = { model, options, plan, seed: run.seed, key: `toys:${id}:${randomUUID()}` };
    const outcomes = (await executor.runBatches(input, toyBatches(run.count), onBatch, signal)).flat();
    const summary = toySummarySchema.parse(summariseToys(plan, outcomes, run.count));
    await finish({ state: 'succeeded', summary, progress: 1, stage: 'done' });
  } catch (e) {
    if (e instanceof FitCancelledError || signal.aborted) await finish({ state: 'cancelled', failure: `Cancelled by ${control.cancelledBy() ?? 'a user'}.`, stage: 'cancelled' });
    else if (e instanceof FitInputError) await finish({ state: 'failed', failure: `No toys can be drawn: ${e.message}.`, stage: 'failed' });
    else if (e instanceof ShardFailedError) {
      log(`[toys ${id}] ${e.message}`);
      await finish({ state: 'failed', failure: `A batch of toys failed on the workers, and again when retried: ${e.message}. Tell an admin; the workers' logs say more.`, stage: 'failed' });
    } else {
      log(`[toys ${id}] ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
      await finish({ state: 'failed', failure: 'The toys stopped on an internal error; it has been logged. Try again, and tell an admin if it persists.', stage: 'failed' });
    }
  }
}

/** Threads that make plans and run batches: the server's own (embedded database) or a worker's. */
export function toyThreads(threads: number, niceness: number) {
  // the engine's toy worker lives in ../fit; a module of that folder with this one's extension (.ts or .js) locates it
  const batches = workerPool(threadEntry('toy-batch.worker'), {
    minThreads: 0,
    maxThreads: threads,
    idleTimeout: 60_000,
    workerData: { niceness },
  });
  const plans = workerPool(threadEntry('toy-plan.worker'), { minThreads: 0, maxThreads: 1, idleTimeout: 60_000, workerData: { niceness } });
  return {
    threads,
    prepare: async (model: ExchangeModel, options: FitOptions, hypothesis: ToyHypothesis, signal?: AbortSignal): Promise<ToyPlan> => {
      const outcome = (await plans.run({ model, options, hypothesis, niceness }, { signal })) as { ok: true; plan: ToyPlan } | { ok: false; input: boolean; message: string };
      if (outcome.ok) return outcome.plan;
      if (outcome.input) throw new FitInputError(outcome.message);
      throw new Error(outcome.message);
    },
    run: (task: ToyTask, signal?: AbortSignal) => batches.run(task, { signal }) as Promise<ToyOutcome[]>,
    close: async () => {
      await batches.destroy();
      await plans.destroy();
    },
  };
}

/** Batches on the threads of this process, all at once (the pool queues what it cannot start). */
export function threadToyExecutor(threads: ReturnType<typeof toyThreads>, name: string): ToyExecutor {
  return {
    prepare: (model, options, hypothesis, signal) => threads.prepare(model, options, hypothesis, signal).catch(cancelled(signal)),
    runBatches: (input, batches, onBatch, signal) =>
      Promise.all(
        batches.map(async (indices) => {
          const out = await threads.run({ ...input, indices }, signal).catch(cancelled(signal));
          onBatch(indices.length, name);
          return out;
        }),
      ),
  };
}

function cancelled(signal: AbortSignal) {
  return (e: unknown): never => {
    if (signal.aborted) throw new FitCancelledError();
    throw e;
  };
}

/** Batches through the queue: the plan is made on the coordinating worker's plan thread, every worker takes batches. */
export function queuedToyExecutor(db: Db, queue: Queue, threads: ReturnType<typeof toyThreads>): ToyExecutor {
  return {
    prepare: (model, options, hypothesis, signal) => threads.prepare(model, options, hypothesis, signal).catch(cancelled(signal)),
    runBatches: (input, batches, onBatch, signal) =>
      runSharded<number[], ToyOutcome[]>(db, queue, {
        run: input.key!,
        queue: QUEUES.toyBatch,
        input,
        payloads: batches,
        signal,
        onShard: (shard, _output, worker) => onBatch(batches[shard].length, worker),
      }),
  };
}

/** A worker's side of toy batches taken from the queue, on its toy threads. */
export function toyBatchWorker(pool: ReturnType<typeof toyThreads>) {
  return {
    prepare: (input: unknown) => input as ToyInput,
    compute: (input: ToyInput, indices: number[]) => pool.run({ ...input, indices }),
  };
}

/** A toy run taken from the queue by a worker; the run's row is checked every second for a cancellation. */
export async function coordinateToys(db: Db, queue: Queue, threads: ReturnType<typeof toyThreads>, id: number, log: (line: string) => void, worker: string) {
  const watch = abortWhenCancelled(db, toyRunsTable, id);
  try {
    await executeToys(db, id, queuedToyExecutor(db, queue, threads), { signal: watch.signal, log, cancelledBy: () => undefined, coordinator: worker });
  } finally {
    watch.stop();
  }
}
