import type { MessagePort } from 'node:worker_threads';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { hypothesisScanResultSchema, type HypothesisScanOptions, type HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { FitCancelledError, FitInputError, scanHypotheses, type FitPool, type ScanToyOutcome, type ScanToyTask } from '../../fit';
import { createFitPool, threadEntry, workerPool } from './pool';
import { lowerThreadPriority } from './thread-priority';

/**
 * A scan over signal hypotheses in its own thread, like a fit job (fit.worker.ts): the thread
 * keeps the engine's pool between scans; progress goes back through a message port.
 */
export type ScanTask = { model: ExchangeModel; options: HypothesisScanOptions; threads?: number; niceness?: number; progress: MessagePort };
export type ScanOutcome = { ok: true; result: HypothesisScanResult } | { ok: false; kind: 'input' | 'numeric' | 'internal'; message: string };

let pool: FitPool | null = null;
/** The background-only toys of a scan's global significance, in batches on threads of their own (started with the first scan that asks for toys). */
let toyThreads: ReturnType<typeof workerPool> | null = null;

export default async function runScan({ model, options, threads, niceness = 0, progress }: ScanTask): Promise<ScanOutcome> {
  if (!pool) {
    lowerThreadPriority(niceness);
    pool = createFitPool({ threads, niceness });
  }
  try {
    const threadCount = pool.threads;
    const withToys = options.upcrossingToys > 0 || options.trialsToys > 0;
    if (withToys) toyThreads ??= workerPool(threadEntry('hypothesis-toys.worker'), { minThreads: 0, maxThreads: threadCount, idleTimeout: 5 * 60_000, workerData: { niceness } });
    const runToys = withToys && toyThreads ? (task: ScanToyTask, signal?: AbortSignal) => toyThreads!.run(task, { signal }) as Promise<ScanToyOutcome[]> : undefined;
    const result = await scanHypotheses(model, options, { pool, runToys, toyBatchesInFlight: 2 * threadCount, onProgress: (fraction, stage) => progress.postMessage({ fraction, stage }) });
    // only finite numbers are kept (one NaN or infinity and no number of the scan is)
    const checked = hypothesisScanResultSchema.safeParse(result);
    if (!checked.success) return { ok: false, kind: 'numeric', message: checked.error.issues.slice(0, 3).map((i) => `${i.path.join('.')} (${i.message})`).join('; ') };
    return { ok: true, result: checked.data };
  } catch (e) {
    if (e instanceof FitCancelledError) throw e;
    const kind = e instanceof FitInputError ? 'input' : 'internal';
    return { ok: false, kind, message: e instanceof Error ? (kind === 'internal' ? (e.stack ?? e.message) : e.message) : String(e) };
  } finally {
    progress.close();
  }
}
