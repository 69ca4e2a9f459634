import type { FitContext } from '../fit/covariance';
import type { FitPool } from '../fit/pool';
import type { WorkerBatch } from '../fit/fit-worker';
import type { JobResult } from '../fit/jobs';
import type { Db } from '../db/client';
import { QUEUES, runSharded, type Queue } from './queue';

/** How many shards a fit's refits are cut into on the queue (the engine makes 12 batches per "thread"). */
const THREADS_EQUIVALENT = 3;

/**
 * The engine's refit pool, over the queue: the batches the engine hands out in one go become
 * the shards of one run, whose contexts are stored once. Any worker takes shards; the outputs
 * come back in order, so the fit's numbers do not depend on who computed what.
 */
export function queuedFitPool(db: Db, queue: Queue, run: string, onShard?: (worker: string) => void): FitPool & { shards: () => number } {
  let pending: { batch: WorkerBatch; resolve: (r: JobResult[]) => void; reject: (e: unknown) => void; signal?: AbortSignal }[] = [];
  let round = 0;
  let shards = 0;
  const flush = () => {
    const batches = pending;
    pending = [];
    const contexts = batches[0].batch.contexts;
    shards += batches.length;
    runSharded<WorkerBatch['jobs'], JobResult[]>(db, queue, {
      run: `${run}:${round++}`,
      queue: QUEUES.refits,
      input: contexts.map(plainCopy),
      payloads: batches.map((b) => b.batch.jobs),
      signal: batches[0].signal,
      onShard: (shard, output, worker) => {
        onShard?.(worker);
        batches[shard].resolve(output);
      },
    }).catch((e) => batches.forEach((b) => b.reject(e)));
  };
  return {
    threads: THREADS_EQUIVALENT,
    shards: () => shards,
    runBatch: (batch, signal) =>
      new Promise<JobResult[]>((resolve, reject) => {
        // the engine sends all batches of a round in one tick, with the same contexts
        if (pending.length && pending[0].batch.contexts !== batch.contexts) flush();
        if (pending.length === 0) setImmediate(flush);
        pending.push({ batch, resolve, reject, signal });
      }),
    destroy: async () => {},
  };
}

/** The context with its typed arrays copied out of shared memory, so that it can be serialised. */
function plainCopy(ctx: FitContext): FitContext {
  return copy(ctx) as FitContext;
}
function copy(x: unknown): unknown {
  if (ArrayBuffer.isView(x) && !(x instanceof DataView)) return (x as unknown as { slice: () => unknown }).slice();
  if (Array.isArray(x)) return x.map(copy);
  if (x !== null && typeof x === 'object') return Object.fromEntries(Object.entries(x).map(([k, v]) => [k, copy(v)]));
  return x;
}
