import type { Db } from '../db/client';
import { fits } from '../db/schema';
import type { Piscina } from 'piscina';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import type { ParameterDiagnosisNumbers, WhatIfInput, WhatIfOutcome } from '../fit';
import { threadEntry, workerPool } from './threads/pool';
import type { DiagnosisTask, WhatIfTask } from './threads/diagnosis.worker';
import { executeFit, INTERRUPTED } from './execute-fit';
import { localRunner } from './local-runner';
import { startJobThread, type JobThread } from './threads/fit-thread';

/**
 * Runs fit jobs off the request thread: one fit at a time, in a fit thread (threads/fit-thread.ts) whose
 * engine spreads the refits over its worker pool. Progress is written to the fit's row (at most every 300 ms),
 * so any request, from any client, reads it. A job that was running when the process stopped
 * is marked failed with that reason at the next start; queued jobs are picked up again.
 */
export type FitRunner = {
  enqueue: (fitId: number) => void | Promise<void>;
  /** true when the fit was queued or running here and is now being cancelled */
  cancel: (fitId: number, by: string) => Promise<boolean>;
  recover: () => Promise<void>;
  /** resolves when the queue is empty and nothing runs */
  idle: () => Promise<void>;
  /** What a change of the model does to a stored fit, in the same thread as the diagnoses. */
  whatIf: (input: WhatIfInput) => Promise<WhatIfOutcome>;
  /** One parameter's diagnosis numbers, computed in a thread of their own (fits do not hold them up). */
  diagnose: (model: ExchangeModel, options: FitOptions, parameter: string) => Promise<ParameterDiagnosisNumbers>;
  close: () => Promise<void>;
};

export { INTERRUPTED, NOT_FINITE } from './execute-fit';

export function createFitRunner(db: Db, log: (line: string) => void, options: { threads?: number; niceness?: number } = {}): FitRunner {
  // the job thread (and the engine's refit threads in it) start with the first fit, not with the server
  let thread: JobThread | null = null;
  const jobs = () => (thread ??= startJobThread(options.threads, options.niceness));
  let diagnoses: Piscina | null = null;
  const diagnosisThread = () => (diagnoses ??= workerPool(threadEntry('diagnosis.worker'), { minThreads: 0, maxThreads: 1, idleTimeout: 5 * 60_000 }));
  const runner = localRunner(
    db,
    fits,
    (id, signal, cancelledBy) => executeFit(db, id, (input, onInput, onProgress, s) => jobs().run(input, onInput, onProgress, s), { signal, log, cancelledBy }),
    { interrupted: INTERRUPTED, what: 'fit', log },
  );

  return {
    enqueue: runner.enqueue,
    cancel: runner.cancel,
    recover: runner.recover,
    idle: runner.idle,
    whatIf: async (input) => (await diagnosisThread().run({ whatIf: input, niceness: options.niceness ?? 0 } satisfies WhatIfTask)) as WhatIfOutcome,
    diagnose: async (model, fitOptions, parameter) =>
      (await diagnosisThread().run({ model, options: fitOptions, parameter, niceness: options.niceness ?? 0 } satisfies DiagnosisTask)) as ParameterDiagnosisNumbers,
    close: async () => {
      await diagnoses?.destroy();
      await runner.stop();
      await thread?.close();
    },
  };
}
