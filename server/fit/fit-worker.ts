import type { FitContext } from './covariance';
import { JobRunner, type Job, type JobResult } from './jobs';

/** Worker-thread entry: runs a batch of refits against the contexts sent with it. */
export interface WorkerTask {
  contexts: FitContext[];
  jobs: Job[];
}

export default function runBatch(task: WorkerTask): JobResult[] {
  const runner = new JobRunner(task.contexts);
  return task.jobs.map((job) => runner.run(job));
}
