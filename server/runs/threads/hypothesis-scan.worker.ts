import type { MessagePort } from 'node:worker_threads';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { HypothesisScanOptions } from '@shared/schemas/hypothesis-scan';
import type { FitPool } from '../../fit';
import { scanOutcome, scanToyThreads, type ScanOutcome } from '../scan-outcome';
import { createFitPool } from './pool';
import { lowerThreadPriority } from './thread-priority';

/**
 * A scan over signal hypotheses in its own thread, like a fit job (fit.worker.ts): the thread
 * keeps the engine's pool between scans; progress goes back through a message port.
 */
export type ScanTask = { model: ExchangeModel; options: HypothesisScanOptions; threads?: number; niceness?: number; progress: MessagePort };

let pool: FitPool | null = null;
/** The background-only toys of a scan's global significance, in batches on threads of their own (started with the first scan that asks for toys). */
let toyThreads: ReturnType<typeof scanToyThreads> | null = null;

export default async function runScan({ model, options, threads, niceness = 0, progress }: ScanTask): Promise<ScanOutcome> {
  if (!pool) {
    lowerThreadPriority(niceness);
    pool = createFitPool({ threads, niceness });
  }
  const threadCount = pool.threads;
  try {
    return await scanOutcome(model, options, {
      pool,
      toys: () => (toyThreads ??= scanToyThreads(threadCount, niceness)),
      toyThreads: threadCount,
      onProgress: (fraction, stage) => progress.postMessage({ fraction, stage }),
    });
  } finally {
    progress.close();
  }
}
