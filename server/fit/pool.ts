import os from 'node:os';
import { Piscina } from 'piscina';
import type { FitContext } from './covariance';
import { FitCancelledError } from './errors';
import type { WorkerBatch } from './fit-worker';
import { JobRunner, type Job, type JobResult } from './jobs';

/**
 * Refits on worker threads (piscina). A pool outlives one fit: the API keeps one and passes
 * it to every fitModel call. The worker entry is a TypeScript file in development and tests
 * (loaded through tsx) and can be pointed at a bundled .js file in production.
 */
export interface FitPool {
  readonly threads: number;
  runBatch(batch: WorkerBatch, signal?: AbortSignal): Promise<JobResult[]>;
  destroy(): Promise<void>;
}

export interface FitPoolOptions {
  /** Worker threads; default os.availableParallelism(). */
  threads?: number;
  /** Worker module (path or file URL); default fit-worker.ts/.js beside this module. */
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

/** A piscina pool on a worker file, started with the node flags a worker accepts. */
export function workerPool(filename: string, options: Omit<NonNullable<ConstructorParameters<typeof Piscina>[0]>, 'filename' | 'execArgv'>) {
  return new Piscina({ ...options, filename, execArgv: workerExecArgv(filename) });
}

export function createFitPool(options: FitPoolOptions = {}): FitPool {
  const threads = Math.max(1, options.threads ?? os.availableParallelism());
  const workerFile = options.workerFile ?? siblingWorker(import.meta.url, 'fit-worker');
  const filename = workerFile instanceof URL ? workerFile.href : workerFile;
  // Two batches in hand per thread: a worker goes on with the next batch while this thread is
  // busy (the Asimov fits and the tables of fitModel run here while the refits run there).
  const piscina = workerPool(filename, { minThreads: threads, maxThreads: threads, concurrentTasksPerWorker: 2, idleTimeout: 60_000, workerData: { niceness: options.niceness ?? 0 } });
  return {
    threads,
    async runBatch(batch, signal) {
      try {
        return (await piscina.run(batch, { signal })) as JobResult[];
      } catch (error) {
        if (signal?.aborted) throw new FitCancelledError();
        throw error;
      }
    },
    destroy: () => piscina.destroy(),
  };
}

export interface RunJobsControl {
  pool?: FitPool;
  signal?: AbortSignal;
  onProgress?: (doneFraction: number) => void;
}

const BATCHES_PER_THREAD = 12;

/** A copy of the context whose typed arrays live in SharedArrayBuffers (made once per context). */
const sharedCopies = new WeakMap<FitContext, FitContext>();
function sharedContext(ctx: FitContext): FitContext {
  let copy = sharedCopies.get(ctx);
  if (!copy) {
    copy = toShared({ ...ctx, VBt: undefined }) as FitContext;
    sharedCopies.set(ctx, copy);
  }
  return copy;
}

/** A copy of plain data (objects, arrays) in which every typed array is copied into `buffer` (its byte length given). */
function copyTypedArrays(x: unknown, buffer: (bytes: number) => ArrayBufferLike): unknown {
  if (ArrayBuffer.isView(x) && !(x instanceof DataView)) {
    const bytes = new Uint8Array(buffer(x.byteLength));
    bytes.set(new Uint8Array(x.buffer, x.byteOffset, x.byteLength));
    const View = x.constructor as new (buffer: ArrayBufferLike) => ArrayBufferView;
    return new View(bytes.buffer);
  }
  if (Array.isArray(x)) return x.map((v) => copyTypedArrays(v, buffer));
  if (x !== null && typeof x === 'object') return Object.fromEntries(Object.entries(x).map(([k, v]) => [k, copyTypedArrays(v, buffer)]));
  return x;
}

/** Typed arrays into shared memory: sending the copy to a thread copies only the small fields. */
export const toShared = (x: unknown) => copyTypedArrays(x, (n) => new SharedArrayBuffer(n));

/** Typed arrays out of shared memory, so that the copy can be serialised (v8.serialize refuses shared memory). */
export const toPlain = (x: unknown) => copyTypedArrays(x, (n) => new ArrayBuffer(n));

/**
 * Runs jobs in this thread or, with a pool, in interleaved batches (several per thread so the
 * threads stay busy and progress moves). Results come back in job order.
 */
export async function runJobs(contexts: FitContext[], jobs: Job[], control: RunJobsControl = {}): Promise<JobResult[]> {
  const { pool, signal, onProgress } = control;
  if (jobs.length === 0) return [];
  if (signal?.aborted) throw new FitCancelledError();
  if (!pool) {
    const runner = new JobRunner(contexts);
    const results: JobResult[] = [];
    let lastYield = Date.now();
    for (const job of jobs) {
      results.push(runner.run(job));
      onProgress?.(results.length / jobs.length);
      if (Date.now() - lastYield > 25) {
        // Let the event loop deliver an abort (and other requests) between refits.
        await new Promise((resolve) => setImmediate(resolve));
        lastYield = Date.now();
      }
      if (signal?.aborted) throw new FitCancelledError();
    }
    return results;
  }
  // Small interleaved batches keep both threads busy to the end even when a few refits need
  // the Newton fall-back; the contexts' arrays live in shared memory, so sending them with
  // every batch copies only their small fields, and each worker prepares a context once.
  const nBatches = Math.min(jobs.length, pool.threads * BATCHES_PER_THREAD);
  const batches: number[][] = Array.from({ length: nBatches }, () => []);
  jobs.forEach((_, i) => batches[i % nBatches].push(i));
  const shared = contexts.map(sharedContext);
  const results: JobResult[] = new Array(jobs.length);
  let done = 0;
  await Promise.all(
    batches.map(async (indices) => {
      const out = await pool.runBatch({ contexts: shared, jobs: indices.map((i) => jobs[i]) }, signal);
      indices.forEach((i, k) => (results[i] = out[k]));
      done += indices.length;
      onProgress?.(done / jobs.length);
    }),
  );
  return results;
}
