import { toPlain, type FitPool, type RefitBatch, type RefitResult } from '../../fit';
import type { Db } from '../../db/client';
import { QUEUES, runSharded, type Queue } from './queue';

/** How many shards a fit's refits are cut into on the queue (the engine makes 12 batches per "thread"). */
const THREADS_EQUIVALENT = 3;

/**
 * The engine's refit pool, over the queue: the batches the engine hands out in one go become
 * the shards of one run, whose contexts are stored once. Any worker takes shards; the outputs
 * come back in order, so the fit's numbers do not depend on who computed what.
 */
export function queuedFitPool(db: Db, queue: Queue, run: string, onShard?: (worker: string) => void): FitPool {
  let pending: { batch: RefitBatch; resolve: (r: RefitResult[]) => void; reject: (e: unknown) => void; signal?: AbortSignal }[] = [];
  let round = 0;
  const flush = () => {
    const batches = pending;
    pending = [];
    if (batches.length === 0) return;
    const contexts = batches[0].batch.contexts;
    runSharded<RefitBatch['tasks'], RefitResult[]>(db, queue, {
      run: `${run}:${round++}`,
      queue: QUEUES.refits,
      input: toPlain(contexts),
      payloads: batches.map((b) => b.batch.tasks),
      signal: batches[0].signal,
      onShard: (shard, output, worker) => {
        onShard?.(worker);
        batches[shard].resolve(output);
      },
    }).catch((e) => batches.forEach((b) => b.reject(e)));
  };
  return {
    threads: THREADS_EQUIVALENT,
    runBatch: (batch, signal) =>
      new Promise<RefitResult[]>((resolve, reject) => {
        // the engine sends all batches of a round in one tick, with the same contexts
        if (pending.length && pending[0].batch.contexts !== batch.contexts) flush();
        if (pending.length === 0) setImmediate(flush);
        pending.push({ batch, resolve, reject, signal });
      }),
    destroy: async () => {},
  };
}
