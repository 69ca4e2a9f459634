import { MessageChannel } from 'node:worker_threads';
import { threadEntry, workerPool } from './pool';
import type { JobMessage, JobOutcome, JobTask } from './fit.worker';
import type { StorableResult } from '../fit-outcome';
import type { ComputeFit } from '../execute-fit';

export class JobError extends Error {
  constructor(
    /** 'shards': part of the work failed on the workers, and again on its retry */
    readonly kind: 'cancelled' | 'input' | 'numeric' | 'internal' | 'shards',
    message: string,
  ) {
    super(message);
  }
}

/** The job thread, seen from the server thread: run a fit there, from its input as stored (cancellable), close the thread. */
export type JobThread = {
  run: ComputeFit;
  close: () => Promise<void>;
};

export function startJobThread(threads?: number, niceness = 0): JobThread {
  // one job at a time; cancelling a job ends its thread (and the engine's refit threads with it)
  const piscina = workerPool(threadEntry('fit.worker'), { minThreads: 0, maxThreads: 1, idleTimeout: 10 * 60_000 });

  return {
    run: async (input, onInput, onProgress, signal): Promise<StorableResult> => {
      const { port1, port2 } = new MessageChannel();
      port1.on('message', (m: JobMessage) => ('inputSha256' in m ? onInput(m.inputSha256) : onProgress(m.fraction, m.stage)));
      try {
        const outcome = (await piscina.run({ ...input, threads, niceness, progress: port2 } satisfies JobTask, { transferList: [port2], signal })) as JobOutcome;
        if (!outcome.ok) throw new JobError(outcome.kind, outcome.message);
        return outcome.stored;
      } catch (e) {
        if (e instanceof JobError) throw e;
        if (signal.aborted) throw new JobError('cancelled', 'cancelled');
        throw new JobError('internal', e instanceof Error ? (e.stack ?? e.message) : String(e));
      } finally {
        port1.close();
      }
    },
    close: () => piscina.destroy(),
  };
}
