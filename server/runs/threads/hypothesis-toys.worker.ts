import { workerData } from 'piscina';
import { lowerThreadPriority } from './thread-priority';
import { createScanToyFitter, runScanToyTask, type ScanToyFitter, type ScanToyOutcome, type ScanToyTask } from '../../fit';

/**
 * Worker-thread entry for the background-only pseudo-experiments of a scan over signal
 * hypotheses: fits a batch of toys under every hypothesis. A scan sends its setup with every
 * batch; each worker builds the hypotheses' problems and scratch buffers once per setup (by its key)
 * and keeps them for the next batches.
 */
lowerThreadPriority((workerData as { niceness?: number } | undefined)?.niceness ?? 0);

const fitters = new Map<string, ScanToyFitter>();
const KEEP = 2;

export default function runScanToyBatch(task: ScanToyTask): ScanToyOutcome[] {
  let fitter = fitters.get(task.setup.key);
  if (!fitter) {
    fitter = createScanToyFitter(task.setup);
    fitters.set(task.setup.key, fitter);
    while (fitters.size > KEEP) fitters.delete(fitters.keys().next().value!);
  }
  return runScanToyTask(task, fitter);
}
