import { runColdFits, type ColdFit, type ColdFitTask } from '../../fit';

/** Worker-thread entry of the refit-agreement suite: a batch of reference cold fits. */
export default function runColdFitBatch(task: ColdFitTask): ColdFit[] {
  return runColdFits(task);
}
