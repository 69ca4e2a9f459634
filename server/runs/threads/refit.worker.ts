import { workerData } from 'piscina';
import { createScratch, Refitter, type FitContext, type RefitBatch, type RefitResult, type Scratch } from '../../fit';
import { lowerThreadPriority } from './thread-priority';

/** Worker-thread entry: runs a batch of refits against the contexts sent with it. */

/**
 * Contexts this worker has seen, by key, with their scratch (workspace, derivative buffers and
 * the Hessian basis): a fit sends its contexts with every batch, but each worker builds the
 * scratch of a context once. The few most recent contexts are kept.
 */
const seen = new Map<string, { ctx: FitContext; scratch: Scratch }>();
lowerThreadPriority((workerData as { niceness?: number } | undefined)?.niceness ?? 0);
const KEEP = 6;

function cached(ctx: FitContext): FitContext {
  const hit = seen.get(ctx.key);
  if (hit) return hit.ctx;
  seen.set(ctx.key, { ctx, scratch: createScratch(ctx.problem) });
  while (seen.size > KEEP) seen.delete(seen.keys().next().value!);
  return ctx;
}

export default function runBatch(batch: RefitBatch): RefitResult[] {
  const contexts = batch.contexts.map(cached);
  const runner = new Refitter(contexts, (ctx) => seen.get(ctx.key)?.scratch ?? createScratch(ctx.problem));
  return batch.tasks.map((task) => runner.run(task));
}
