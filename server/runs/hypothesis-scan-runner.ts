import { MessageChannel } from 'node:worker_threads';
import { exchangeModelSchema, type ExchangeModel } from '@shared/schemas/exchange';
import { storedScanOptions } from '@shared/schemas/hypothesis-scan';
import type { Db } from '../db/client';
import { hypothesisScanInput } from '../db/hypothesis-scans.repository';
import { localRunner, type JobRunner } from './local-runner';
import { hypothesisScansTable, jobRow } from './run-rows';
import { ShardFailedError } from './queue/queue';
import { threadEntry, workerPool } from './threads/pool';
import type { ScanTask } from './threads/hypothesis-scan.worker';
import type { ScanOutcome } from './scan-outcome';
import type { HypothesisScanOptions } from '@shared/schemas/hypothesis-scan';

export const SCAN_INTERRUPTED = 'Interrupted: the server stopped while this scan was running. Start it again.';

/**
 * Runs scans over signal hypotheses in this process: one scan at a time, in a thread of its own
 * whose engine spreads the hypotheses' refits over its pool. Like the fit runner: progress in the
 * row, a scan that was going when the process stopped is marked failed at the next start, queued
 * ones are picked up again. With a PostgreSQL server, scans wait on its queue for a worker process
 * instead (queue/coordinate.ts), which runs executeScan with the refits as shards for every worker.
 */
export type HypothesisScanRunner = JobRunner;

export function createHypothesisScanRunner(db: Db, log: (line: string) => void, options: { threads?: number; niceness?: number } = {}): HypothesisScanRunner {
  let piscina: ReturnType<typeof workerPool> | null = null;
  const thread = () => (piscina ??= workerPool(threadEntry('hypothesis-scan.worker'), { minThreads: 0, maxThreads: 1, idleTimeout: 10 * 60_000 }));
  const runner = localRunner(db, hypothesisScansTable, (id, signal, cancelledBy) => executeScan(db, id, inThread(thread(), options), { signal, log, cancelledBy }), {
    interrupted: SCAN_INTERRUPTED,
    what: 'scan',
    log,
  });
  return {
    enqueue: runner.enqueue,
    cancel: runner.cancel,
    recover: runner.recover,
    idle: runner.idle,
    close: async () => {
      await runner.stop();
      await piscina?.destroy();
    },
  };
}

/** Runs the engine on a scan's model; a cancellation rejects (with FitCancelledError, or the thread's abort). */
export type ComputeScan = (model: ExchangeModel, options: HypothesisScanOptions, onProgress: (fraction: number, stage: string) => void, signal: AbortSignal) => Promise<ScanOutcome>;

/** The scan in the scan thread of this process, progress through a message port. */
function inThread(piscina: ReturnType<typeof workerPool>, options: { threads?: number; niceness?: number }): ComputeScan {
  return async (model, scanOptions, onProgress, signal) => {
    const { port1, port2 } = new MessageChannel();
    port1.on('message', (m: { fraction: number; stage: string }) => onProgress(m.fraction, m.stage));
    try {
      const task: ScanTask = { model, options: scanOptions, threads: options.threads, niceness: options.niceness, progress: port2 };
      return (await piscina.run(task, { transferList: [port2], signal })) as ScanOutcome;
    } finally {
      port1.close();
    }
  };
}

/**
 * The model as the engine sees it: observed counts only of the regions the scan may read
 * (`regionsInFit`, decided when it was asked for); every other region's data are dropped before
 * they leave the database layer, so an expected scan of a blinded analysis cannot read them.
 */
export function modelForScan(model: ExchangeModel, regionsInFit: string[]): ExchangeModel {
  const readable = new Set(regionsInFit);
  return { ...model, regions: model.regions.map((r) => (readable.has(r.key) ? r : { ...r, observed: undefined })) };
}

/**
 * One scan from its row to its stored result, wherever it runs (a thread of this process, or a
 * worker process that coordinates it and names itself as `coordinator`): marks it running,
 * writes progress, stores the result or a failure a person can act on.
 */
export async function executeScan(
  db: Db,
  id: number,
  compute: ComputeScan,
  control: { signal: AbortSignal; log: (line: string) => void; cancelledBy: () => string | undefined; coordinator?: string },
): Promise<void> {
  const input = await hypothesisScanInput(db, id);
  if (!input || input.scan.state !== 'queued') return;
  const row = jobRow(db, hypothesisScansTable, id);
  if (!(await row.start({ stage: 'starting', coordinatedBy: control.coordinator ?? null }))) return;
  try {
    const model = modelForScan(exchangeModelSchema.parse(input.model), input.scan.regionsInFit);
    const outcome = await compute(model, storedScanOptions(input.scan.options).options, row.progress, control.signal);
    if (outcome.ok) {
      const converged = outcome.result.points.filter((p) => p.status === 'converged').length;
      await row.finish(
        converged > 0
          ? { state: 'succeeded', result: outcome.result, progress: 1, stage: 'done' }
          : { state: 'failed', failure: 'No hypothesis could be fitted: every fit failed to converge. Each hypothesis says why in the scan’s table.', result: outcome.result, progress: 1, stage: 'failed' },
      );
    } else if (outcome.kind === 'input') await row.finish({ state: 'failed', failure: `The model or options cannot be scanned: ${outcome.message}`, stage: 'failed' });
    else if (outcome.kind === 'numeric') {
      control.log(`[scan ${id}] non-finite result: ${outcome.message}`);
      await row.finish({ state: 'failed', failure: `The scan ended with a number that is not finite (NaN or infinite), so none of its numbers are shown. First at: ${outcome.message}.`, stage: 'failed' });
    } else {
      control.log(`[scan ${id}] ${outcome.message}`);
      await row.finish({ state: 'failed', failure: 'The scan stopped on an internal error; it has been logged. Try again, and tell an admin if it persists.', stage: 'failed' });
    }
  } catch (e) {
    if (control.signal.aborted) await row.finish({ state: 'cancelled', failure: `Cancelled by ${control.cancelledBy() ?? 'a user'}.`, stage: 'cancelled' });
    else if (e instanceof ShardFailedError) {
      control.log(`[scan ${id}] ${e.message}`);
      await row.finish({ state: 'failed', failure: `Part of the scan failed on the workers, and again when retried: ${e.message}. Tell an admin; the workers' logs say more.`, stage: 'failed' });
    } else {
      control.log(`[scan ${id}] ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
      await row.finish({ state: 'failed', failure: 'The scan stopped on an internal error; it has been logged. Try again, and tell an admin if it persists.', stage: 'failed' });
    }
  }
}
