import type { MessagePort } from 'node:worker_threads';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitResultSchema, type FitOptions, type FitResult } from '@shared/schemas/fit';
import { createFitPool, fitModel, FitCancelledError, FitInputError, type FitPool } from '../fit';
import { lowerThreadPriority } from '../fit/thread-priority';

/**
 * A fit job in its own thread, so that the API's event loop never waits for the engine. The
 * thread keeps the engine's refit pool between jobs; progress goes back through a message port.
 */
export type JobTask = { model: ExchangeModel; options: FitOptions; threads?: number; niceness?: number; progress: MessagePort };
export type JobOutcome = { ok: true; result: FitResult } | { ok: false; kind: 'input' | 'numeric' | 'internal'; message: string };

let pool: FitPool | null = null;

export default async function runJob({ model, options, threads, niceness = 0, progress }: JobTask): Promise<JobOutcome> {
  if (!pool) {
    lowerThreadPriority(niceness);
    pool = createFitPool({ threads, niceness });
  }
  try {
    const result = await fitModel(model, options, { pool, onProgress: (fraction, stage) => progress.postMessage({ fraction, stage }) });
    // the result contract allows only finite numbers; one NaN or infinity and no number of this fit is kept
    const checked = fitResultSchema.safeParse(result);
    if (!checked.success) return { ok: false, kind: 'numeric', message: notFinite(checked.error.issues) };
    return { ok: true, result };
  } catch (e) {
    if (e instanceof FitCancelledError) throw e;
    const kind = e instanceof FitInputError ? 'input' : 'internal';
    return { ok: false, kind, message: e instanceof Error ? (kind === 'internal' ? (e.stack ?? e.message) : e.message) : String(e) };
  } finally {
    progress.close();
  }
}

/** Names where the result broke its contract, e.g. "parameters.3.error" (at most three places). */
function notFinite(issues: { path: PropertyKey[]; message: string }[]) {
  const places = issues.slice(0, 3).map((i) => `${i.path.map(String).join('.') || 'result'} (${i.message})`);
  return places.join('; ') + (issues.length > 3 ? ` and ${issues.length - 3} more` : '');
}
