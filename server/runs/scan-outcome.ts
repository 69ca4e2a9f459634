import type { ExchangeModel } from '@shared/schemas/exchange';
import { hypothesisScanResultSchema, type HypothesisScanOptions, type HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { FitCancelledError, FitInputError, scanHypotheses, type FitPool, type ScanToyOutcome, type ScanToyTask } from '../fit';
import { threadEntry, workerPool } from './threads/pool';

export type ScanOutcome = { ok: true; result: HypothesisScanResult } | { ok: false; kind: 'input' | 'numeric' | 'internal'; message: string };

/** Threads for the background-only toys of scans' global significance (the hypothesis-toys worker entry). */
export function scanToyThreads(threads: number, niceness: number) {
  return workerPool(threadEntry('hypothesis-toys.worker'), { minThreads: 0, maxThreads: threads, idleTimeout: 5 * 60_000, workerData: { niceness } });
}

/**
 * A scan whose result keeps its contract, wherever it runs (a thread of the web server, or a
 * worker process that coordinates it): only finite numbers (one NaN or infinity and no number of
 * the scan is kept). The hypotheses' refits go to `pool`; toys to `toys`, started on the first
 * scan that asks for them. Cancellation still rejects with FitCancelledError.
 */
export async function scanOutcome(
  model: ExchangeModel,
  options: HypothesisScanOptions,
  control: { pool: FitPool; toys: () => ReturnType<typeof scanToyThreads>; toyThreads: number; onProgress: (fraction: number, stage: string) => void; signal?: AbortSignal },
): Promise<ScanOutcome> {
  try {
    const withToys = options.upcrossingToys > 0 || options.trialsToys > 0;
    const runToys = withToys ? (task: ScanToyTask, signal?: AbortSignal) => control.toys().run(task, { signal }) as Promise<ScanToyOutcome[]> : undefined;
    const result = await scanHypotheses(model, options, { pool: control.pool, runToys, toyBatchesInFlight: 2 * control.toyThreads, onProgress: control.onProgress, signal: control.signal });
    const checked = hypothesisScanResultSchema.safeParse(result);
    if (!checked.success) return { ok: false, kind: 'numeric', message: checked.error.issues.slice(0, 3).map((i) => `${i.path.join('.')} (${i.message})`).join('; ') };
    return { ok: true, result: checked.data };
  } catch (e) {
    if (e instanceof FitCancelledError) throw e;
    const kind = e instanceof FitInputError ? 'input' : 'internal';
    return { ok: false, kind, message: e instanceof Error ? (kind === 'internal' ? (e.stack ?? e.message) : e.message) : String(e) };
  }
}
