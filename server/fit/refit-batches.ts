import type { FitContext } from './covariance';
import { FitCancelledError } from './errors';
import { Refitter, type RefitTask, type RefitResult } from './refit-tasks';

/**
 * Refits run in this thread or on a pool of threads the caller gives (server/runs/threads/pool.ts
 * makes one): the engine sends plain-data batches and never starts a thread itself.
 */
export interface FitPool {
  readonly threads: number;
  runBatch(batch: RefitBatch, signal?: AbortSignal): Promise<RefitResult[]>;
  destroy(): Promise<void>;
}

/** A batch of refits with the contexts they start from, as a thread receives it. */
export interface RefitBatch {
  contexts: FitContext[];
  tasks: RefitTask[];
}

export interface RunRefitsControl {
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
 * Runs tasks in this thread or, with a pool, in interleaved batches (several per thread so the
 * threads stay busy and progress moves). Results come back in task order.
 */
export async function runRefits(contexts: FitContext[], tasks: RefitTask[], control: RunRefitsControl = {}): Promise<RefitResult[]> {
  const { pool, signal, onProgress } = control;
  if (tasks.length === 0) return [];
  if (signal?.aborted) throw new FitCancelledError();
  if (!pool) {
    const runner = new Refitter(contexts);
    const results: RefitResult[] = [];
    let lastYield = Date.now();
    for (const task of tasks) {
      results.push(runner.run(task));
      onProgress?.(results.length / tasks.length);
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
  const nBatches = Math.min(tasks.length, pool.threads * BATCHES_PER_THREAD);
  const batches: number[][] = Array.from({ length: nBatches }, () => []);
  tasks.forEach((_, i) => batches[i % nBatches].push(i));
  const shared = contexts.map(sharedContext);
  const results: RefitResult[] = new Array(tasks.length);
  let done = 0;
  await Promise.all(
    batches.map(async (indices) => {
      const out = await pool.runBatch({ contexts: shared, tasks: indices.map((i) => tasks[i]) }, signal);
      indices.forEach((i, k) => (results[i] = out[k]));
      done += indices.length;
      onProgress?.(done / tasks.length);
    }),
  );
  return results;
}
