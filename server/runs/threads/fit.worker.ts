import type { MessagePort } from 'node:worker_threads';
import type { FitPool } from '../../fit';
import { readFitInput, type FitInput } from '../fit-input';
import { createFitPool } from './pool';
import { lowerThreadPriority } from './thread-priority';
import { fitOutcome, type JobOutcome } from '../fit-outcome';

/**
 * A fit job in its own thread, so that the API's event loop never waits for the engine, nor for
 * reading a large model. The thread keeps the engine's refit pool between jobs; the input's hash
 * and then the progress go back through a message port.
 */
export type JobTask = FitInput & { threads?: number; niceness?: number; progress: MessagePort };
export type JobMessage = { inputSha256: string } | { fraction: number; stage: string };
export type { JobOutcome };

let pool: FitPool | null = null;

export default async function runJob({ modelText, options: given, threads, niceness = 0, progress }: JobTask): Promise<JobOutcome> {
  if (!pool) {
    lowerThreadPriority(niceness);
    pool = createFitPool({ threads, niceness });
  }
  const post = (m: JobMessage) => progress.postMessage(m);
  try {
    let input: ReturnType<typeof readFitInput>;
    try {
      input = readFitInput({ modelText, options: given });
    } catch (e) {
      return { ok: false, kind: 'internal', message: e instanceof Error ? (e.stack ?? e.message) : String(e) };
    }
    post({ inputSha256: input.inputSha256 });
    return await fitOutcome(input.model, input.options, { pool, onProgress: (fraction, stage) => post({ fraction, stage }) });
  } finally {
    progress.close();
  }
}
