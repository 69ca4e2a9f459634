import os from 'node:os';
import { Piscina } from 'piscina';
import { FitCancelledError, type FitPool, type RefitResult } from '../../fit';

/**
 * Worker threads (piscina). A fit pool outlives one fit: the server keeps one and passes it to
 * every fitModel call. Worker entries are TypeScript files in development and tests (loaded
 * through tsx) and .js files beside this module when built.
 */
export interface FitPoolOptions {
  /** Worker threads; default os.availableParallelism(). */
  threads?: number;
  /** Worker module (path or file URL); default refit.worker.ts/.js beside this module. */
  workerFile?: string | URL;
  /**
   * CPU niceness of the worker threads (0 = normal, 19 = lowest): the server runs fits at a low
   * priority so that its request thread wins the cores whenever both want them.
   */
  niceness?: number;
}

/**
 * Node flags for a worker thread: the process's own, less the heap sizes (a worker refuses
 * them; they belong to the process), plus the tsx loader for a .ts worker unless the process
 * already runs under it (vitest does not).
 */
function workerExecArgv(filename: string): string[] {
  const execArgv = process.execArgv.filter((a) => !/^--max-(semi|old)-space-size/.test(a));
  if (filename.endsWith('.ts') && !execArgv.some((a) => a.includes('tsx'))) execArgv.push('--import', 'tsx');
  return execArgv;
}

/** The worker module `name` beside the module at `here` (its import.meta.url): .ts under tsx, .js when built. */
export function siblingWorker(here: string, name: string): string {
  const url = new URL(here);
  return new URL(`./${name}${url.pathname.endsWith('.ts') ? '.ts' : '.js'}`, url).href;
}

/** A worker entry of this folder (`name` without extension), such as 'diagnosis.worker'. */
export const threadEntry = (name: string) => siblingWorker(import.meta.url, name);

/** A piscina pool on a worker file, started with the node flags a worker accepts. */
export function workerPool(filename: string, options: Omit<NonNullable<ConstructorParameters<typeof Piscina>[0]>, 'filename' | 'execArgv'>) {
  return new Piscina({ ...options, filename, execArgv: workerExecArgv(filename) });
}

export function createFitPool(options: FitPoolOptions = {}): FitPool {
  const threads = Math.max(1, options.threads ?? os.availableParallelism());
  const workerFile = options.workerFile ?? siblingWorker(import.meta.url, 'refit.worker');
  const filename = workerFile instanceof URL ? workerFile.href : workerFile;
  // Two batches in hand per thread: a worker goes on with the next batch while this thread is
  // busy (the Asimov fits and the tables of fitModel run here while the refits run there).
  const piscina = workerPool(filename, { minThreads: threads, maxThreads: threads, concurrentTasksPerWorker: 2, idleTimeout: 60_000, workerData: { niceness: options.niceness ?? 0 } });
  return {
    threads,
    async runBatch(batch, signal) {
      try {
        return (await piscina.run(batch, { signal })) as RefitResult[];
      } catch (error) {
        if (signal?.aborted) throw new FitCancelledError();
        throw error;
      }
    },
    destroy: () => piscina.destroy(),
  };
}
