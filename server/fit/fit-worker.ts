import { workerData } from 'piscina';
import type { FitContext } from './covariance';
import { lowerThreadPriority } from './thread-priority';
import { JobRunner, type Job, type JobResult } from './jobs';
import { createScratch, type Scratch } from './minimiser';

/** Worker-thread entry: runs a batch of refits against the contexts sent with it. */
export interface WorkerBatch {
  contexts: FitContext[];
  jobs: Job[];
}

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

export default function runBatch(batch: WorkerBatch): JobResult[] {
  const contexts = batch.contexts.map(cached);
  const runner = new JobRunner(contexts, (ctx) => seen.get(ctx.key)?.scratch ?? createScratch(ctx.problem));
  return batch.jobs.map((job) => runner.run(job));
}
