import { workerData } from 'piscina';
import { lowerThreadPriority } from './thread-priority';
import { createToyFitter, runToyTask, type ToyOutcome, type ToyFitter, type ToyTask } from '../../fit';

/**
 * Worker-thread entry for pseudo-experiments: fits a batch of toys. A run sends the same model,
 * options and plan with every batch; each worker builds the problem, its workspaces and the
 * yields at the generation point once and keeps them for the next batches of that run.
 */
lowerThreadPriority((workerData as { niceness?: number } | undefined)?.niceness ?? 0);

const fitters = new Map<string, ToyFitter>();
const KEEP = 4;

function fitterFor(task: ToyTask): ToyFitter {
  const key = task.key ?? JSON.stringify([task.model, task.options, task.plan]);
  let fitter = fitters.get(key);
  if (!fitter) {
    fitter = createToyFitter(task.model, task.options, task.plan);
    fitters.set(key, fitter);
    while (fitters.size > KEEP) fitters.delete(fitters.keys().next().value!);
  }
  return fitter;
}

export default function runToyBatch(task: ToyTask): ToyOutcome[] {
  return runToyTask(task, fitterFor(task));
}
