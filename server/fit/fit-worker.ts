import type { FitContext } from './covariance';
import { JobRunner, type Job, type JobResult } from './jobs';

/** Worker-thread entry: runs a batch of refits against the contexts sent with it. */
export interface WorkerBatch {
  contexts: FitContext[];
  jobs: Job[];
}

export default function runBatch(batch: WorkerBatch): JobResult[] {
  const runner = new JobRunner(batch.contexts);
  return batch.jobs.map((job) => runner.run(job));
}
