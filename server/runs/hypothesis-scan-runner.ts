import { MessageChannel } from 'node:worker_threads';
import { exchangeModelSchema, type ExchangeModel } from '@shared/schemas/exchange';
import { storedScanOptions } from '@shared/schemas/hypothesis-scan';
import type { Db } from '../db/client';
import { hypothesisScanInput } from '../db/hypothesis-scans.repository';
import { localRunner, type JobRunner } from './local-runner';
import { hypothesisScansTable, jobRow } from './run-rows';
import { threadEntry, workerPool } from './threads/pool';
import type { ScanOutcome, ScanTask } from './threads/hypothesis-scan.worker';

export const SCAN_INTERRUPTED = 'Interrupted: the server stopped while this scan was running. Start it again.';

/**
 * Runs scans over signal hypotheses in this process: one scan at a time, in a thread of its own
 * whose engine spreads the hypotheses' refits over its pool. Like the fit runner: progress in the
 * row, a scan that was going when the process stopped is marked failed at the next start, queued
 * ones are picked up again. With a PostgreSQL server too, scans run on the web server's threads.
 */
export type HypothesisScanRunner = JobRunner;

export function createHypothesisScanRunner(db: Db, log: (line: string) => void, options: { threads?: number; niceness?: number } = {}): HypothesisScanRunner {
  let piscina: ReturnType<typeof workerPool> | null = null;
  const thread = () => (piscina ??= workerPool(threadEntry('hypothesis-scan.worker'), { minThreads: 0, maxThreads: 1, idleTimeout: 10 * 60_000 }));
  const runner = localRunner(db, hypothesisScansTable, (id, signal, cancelledBy) => executeScan(db, id, thread(), options, { signal, log, cancelledBy }), {
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

/**
 * The model as the engine sees it: observed counts only of the regions the scan may read
 * (`regionsInFit`, decided when it was asked for); every other region's data are dropped before
 * they leave the database layer, so an expected scan of a blinded analysis cannot read them.
 */
export function modelForScan(model: ExchangeModel, regionsInFit: string[]): ExchangeModel {
  const readable = new Set(regionsInFit);
  return { ...model, regions: model.regions.map((r) => (readable.has(r.key) ? r : { ...r, observed: undefined })) };
}

async function executeScan(
  db: Db,
  id: number,
  piscina: ReturnType<typeof workerPool>,
  options: { threads?: number; niceness?: number },
  control: { signal: AbortSignal; log: (line: string) => void; cancelledBy: () => string | undefined },
): Promise<void> {
  const input = await hypothesisScanInput(db, id);
  if (!input || input.scan.state !== 'queued') return;
  const row = jobRow(db, hypothesisScansTable, id);
  if (!(await row.start({ stage: 'starting' }))) return;
  const { port1, port2 } = new MessageChannel();
  port1.on('message', (m: { fraction: number; stage: string }) => row.progress(m.fraction, m.stage));
  try {
    const model = modelForScan(exchangeModelSchema.parse(input.model), input.scan.regionsInFit);
    const task: ScanTask = { model, options: storedScanOptions(input.scan.options).options, threads: options.threads, niceness: options.niceness, progress: port2 };
    const outcome = (await piscina.run(task, { transferList: [port2], signal: control.signal })) as ScanOutcome;
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
    else {
      control.log(`[scan ${id}] ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
      await row.finish({ state: 'failed', failure: 'The scan stopped on an internal error; it has been logged. Try again, and tell an admin if it persists.', stage: 'failed' });
    }
  } finally {
    port1.close();
  }
}
