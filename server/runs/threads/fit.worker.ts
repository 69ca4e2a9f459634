import type { MessagePort } from 'node:worker_threads';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import type { FitPool } from '../../fit';
import { createFitPool } from './pool';
import { lowerThreadPriority } from './thread-priority';
import { fitOutcome, type JobOutcome } from '../fit-outcome';

/**
 * A fit job in its own thread, so that the API's event loop never waits for the engine. The
 * thread keeps the engine's refit pool between jobs; progress goes back through a message port.
 */
export type JobTask = { model: ExchangeModel; options: FitOptions; threads?: number; niceness?: number; progress: MessagePort };
export type { JobOutcome };

let pool: FitPool | null = null;

export default async function runJob({ model, options, threads, niceness = 0, progress }: JobTask): Promise<JobOutcome> {
  if (!pool) {
    lowerThreadPriority(niceness);
    pool = createFitPool({ threads, niceness });
  }
  try {
    return await fitOutcome(model, options, { pool, onProgress: (fraction, stage) => progress.postMessage({ fraction, stage }) });
  } finally {
    progress.close();
  }
}
