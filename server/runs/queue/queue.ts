import { randomUUID } from 'node:crypto';
import v8 from 'node:v8';
import { and, eq, notInArray, sql } from 'drizzle-orm';
import PgBoss from 'pg-boss';
import type { Db } from '../../db/client';
import { workClaims, workInputs, workResults } from '../../db/schema';
import { seenRecently } from './heartbeat';
import { FitCancelledError } from '../../fit';

/**
 * Work through queues in the PostgreSQL server (pg-boss), for when one machine is not enough:
 * the server puts fits, toy runs and scans over signal hypotheses on a queue; worker processes (`npm run worker`, on any
 * machine that reaches the database) take them, split them into shards on a second queue, and
 * every worker takes shards. A shard is retried once on failure (retryLimit 1); its output lands
 * in work_results with the worker that made it.
 */
export const QUEUES = {
  /** { fitId }: a whole fit, coordinated by one worker */
  fit: 'plumbline-fit',
  /** a batch of a fit's refits (impacts, scan, limits) */
  refits: 'plumbline-refits',
  /** { toyRunId }: a pseudo-experiment run, coordinated by one worker */
  toys: 'plumbline-toys',
  /** a batch of toys */
  toyBatch: 'plumbline-toy-batch',
  /** { scanId }: a scan over signal hypotheses, coordinated by one worker (its refits are shards on `refits`) */
  scan: 'plumbline-scan',
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];

/** A coordinating job runs as long as its fit; a shard is short. A worker that stops mid-job has its job expire and retried. */
const EXPIRY_SECONDS: Record<QueueName, number> = { [QUEUES.fit]: 4 * 3600, [QUEUES.toys]: 4 * 3600, [QUEUES.scan]: 4 * 3600, [QUEUES.refits]: 30 * 60, [QUEUES.toyBatch]: 30 * 60 };

export type Queue = PgBoss;

export async function startQueue(url: string, log: (line: string) => void): Promise<Queue> {
  const boss = new PgBoss({
    connectionString: url,
    max: 4,
    application_name: 'plumbline-queue',
    maintenanceIntervalSeconds: 30,
  });
  boss.on('error', (e: Error) => log(`[queue] ${e.message}`));
  await boss.start();
  for (const name of Object.values(QUEUES)) {
    if (await boss.getQueue(name)) continue;
    try {
      await boss.createQueue(name, { name, retryLimit: 1, retryDelay: 0, expireInSeconds: EXPIRY_SECONDS[name] });
    } catch (e) {
      // another process created it meanwhile
      if (!(await boss.getQueue(name))) throw e;
    }
  }
  return boss;
}

/** How often an idle worker slot asks for a job, and how often a coordinator reads its shards' outputs. */
const IDLE_POLL_MS = 150;
const POLL_MS = 50;

export type ShardData<P> = { run: string; shard: number; payload: P };

export class ShardFailedError extends Error {}

/**
 * Runs `payloads` as shards of one run on `queue` and returns their outputs in order. `input`
 * (what every shard needs) is stored once; each shard's output is read back as it lands, and
 * `onShard` is told (progress is the sum of the shards). A shard that failed twice fails the run
 * with its reason; an abort cancels the shards not yet taken. The run's rows are removed at the end.
 */
export async function runSharded<P, R>(
  db: Db,
  queue: Queue,
  spec: { run: string; queue: QueueName; input: unknown; payloads: P[]; signal?: AbortSignal; onShard?: (shard: number, output: R, worker: string) => void },
): Promise<R[]> {
  const { run, payloads, signal } = spec;
  if (payloads.length === 0) return [];
  // the queue's job id of each shard: a shard sent again gets a new one
  const ids = payloads.map(() => randomUUID());
  const resent = new Array<number>(payloads.length).fill(0);
  const outputs: R[] = new Array(payloads.length);
  const done: number[] = [];
  try {
    await db.insert(workInputs).values({ run, data: v8.serialize(spec.input) }).onConflictDoNothing();
    await queue.insert(payloads.map((payload, shard) => ({ id: ids[shard], name: spec.queue, data: { run, shard, payload } satisfies ShardData<P> })));
    let lastStateCheck = Date.now();
    while (done.length < payloads.length) {
      if (signal?.aborted) throw new FitCancelledError();
      const rows = await db
        .select()
        .from(workResults)
        .where(done.length ? and(eq(workResults.run, run), notInArray(workResults.shard, done)) : eq(workResults.run, run));
      for (const row of rows) {
        if (row.data === null) throw new ShardFailedError(`shard ${row.shard + 1} of ${payloads.length} failed twice (last on ${row.worker}): ${row.error ?? 'no reason given'}`);
        outputs[row.shard] = v8.deserialize(row.data) as R;
        done.push(row.shard);
        spec.onShard?.(row.shard, outputs[row.shard], row.worker);
      }
      if (done.length === payloads.length) break;
      if (Date.now() - lastStateCheck > 3000) {
        lastStateCheck = Date.now();
        // a shard whose takers have all stopped being seen is sent again, at most twice
        for (const shard of await lostShards(db, run, done)) {
          if (resent[shard] >= 2) throw new ShardFailedError(`shard ${shard + 1} of ${payloads.length} was lost with the workers that took it, three times`);
          resent[shard] += 1;
          ids[shard] = randomUUID();
          await db.delete(workClaims).where(and(eq(workClaims.run, run), eq(workClaims.shard, shard)));
          await queue.insert([{ id: ids[shard], name: spec.queue, data: { run, shard, payload: payloads[shard] } satisfies ShardData<P> }]);
        }
        // a shard that failed for good, or was cancelled
        const left = ids.filter((_, shard) => !done.includes(shard));
        for (const id of left.slice(0, 20)) {
          const job = await queue.getJobById(spec.queue, id);
          if (job && (job.state === 'failed' || job.state === 'cancelled'))
            throw new ShardFailedError(`shard ${ids.indexOf(id) + 1} of ${payloads.length} ended as ${job.state}: ${describeOutput(job.output)}`);
        }
      }
      await sleep(POLL_MS, signal);
    }
    return outputs;
  } catch (e) {
    const left = ids.filter((_, shard) => !done.includes(shard));
    if (left.length) await queue.cancel(spec.queue, left).catch(() => {});
    throw e;
  } finally {
    // off the fit's path: the outputs are read, and nobody asks for this run again
    void Promise.all([
      db.delete(workResults).where(eq(workResults.run, run)),
      db.delete(workInputs).where(eq(workInputs.run, run)),
      db.delete(workClaims).where(eq(workClaims.run, run)),
    ]).catch(() => {});
  }
}

/** Shards of a run, not done, taken only by workers no longer seen (heartbeat.ts). */
async function lostShards(db: Db, run: string, done: number[]): Promise<number[]> {
  const rows = await db
    .select({ shard: workClaims.shard, alive: sql<boolean>`bool_or(${seenRecently(workClaims.worker)})` })
    .from(workClaims)
    .where(done.length ? and(eq(workClaims.run, run), notInArray(workClaims.shard, done)) : eq(workClaims.run, run))
    .groupBy(workClaims.shard);
  return rows.filter((r) => !r.alive).map((r) => r.shard);
}

function describeOutput(output: unknown) {
  if (output && typeof output === 'object' && 'message' in output) return String((output as { message: unknown }).message);
  return 'the worker stopped or the shard expired';
}

function sleep(ms: number, signal?: AbortSignal) {
  return new Promise<void>((resolve) => {
    const timer = setTimeout(done, ms);
    signal?.addEventListener('abort', done, { once: true });
    function done() {
      clearTimeout(timer);
      signal?.removeEventListener('abort', done);
      resolve();
    }
  });
}

/**
 * Takes shards of `queue` in this process, `concurrency` at a time (one slot per engine thread): reads each run's input once
 * (kept for the few most recent runs), computes, and stores the output with this worker's name.
 * A shard already done (a retry after a late success) is skipped; on its last attempt a failure
 * is stored with its reason so the coordinator stops waiting.
 */
export async function workShards<I, P, R>(
  db: Db,
  queue: Queue,
  spec: {
    queue: QueueName;
    worker: string;
    concurrency: number;
    /** turns the stored input into what compute uses (once per run and process) */
    prepare: (input: unknown) => I | Promise<I>;
    compute: (input: I, payload: P) => Promise<R>;
    log: (line: string) => void;
  },
) {
  const inputs = new Map<string, Promise<I | null>>();
  const inputOf = (run: string) => {
    let input = inputs.get(run);
    if (!input) {
      input = (async () => {
        const [row] = await db.select({ data: workInputs.data }).from(workInputs).where(eq(workInputs.run, run));
        return row ? await spec.prepare(v8.deserialize(row.data)) : null;
      })();
      inputs.set(run, input);
      input.catch(() => inputs.delete(run));
      while (inputs.size > 4) inputs.delete(inputs.keys().next().value!);
    }
    return input;
  };
  const handle = async (job: PgBoss.JobWithMetadata<ShardData<P>>) => {
    const { run, shard, payload } = job.data;
    const [already] = await db.select({ shard: workResults.shard }).from(workResults).where(and(eq(workResults.run, run), eq(workResults.shard, shard)));
    if (already) return;
    await db.insert(workClaims).values({ run, shard, worker: spec.worker }).onConflictDoNothing();
    try {
      const input = await inputOf(run);
      // the run ended (cancelled or failed) and its input is gone: nothing to do
      if (input === null) return;
      const output = await spec.compute(input, payload);
      await db
        .insert(workResults)
        .values({ run, shard, worker: spec.worker, data: v8.serialize(output), attempts: job.retryCount + 1 })
        .onConflictDoNothing();
    } catch (e) {
      const message = e instanceof Error ? e.message : String(e);
      spec.log(`[${spec.queue}] ${run} shard ${shard + 1}, attempt ${job.retryCount + 1}: ${e instanceof Error ? (e.stack ?? message) : message}`);
      if (job.retryCount >= job.retryLimit)
        await db.insert(workResults).values({ run, shard, worker: spec.worker, data: null, error: message, attempts: job.retryCount + 1 }).onConflictDoNothing();
      throw e;
    }
  };
  return takeJobs<ShardData<P>>(queue, spec.queue, spec.concurrency, handle, spec.log);
}

/**
 * Takes jobs of one queue, `concurrency` at a time, until stopped: a loop per slot rather than the
 * queue's own polling, so a slot that finished a job asks for the next at once, and an idle slot
 * asks every IDLE_POLL_MS. A job whose handler throws is failed, and the queue retries it once.
 */
export function takeJobs<T>(queue: Queue, name: QueueName, concurrency: number, handle: (job: PgBoss.JobWithMetadata<T>) => Promise<void>, log: (line: string) => void) {
  let stopped = false;
  const slot = async () => {
    while (!stopped) {
      let job: PgBoss.JobWithMetadata<T> | undefined;
      try {
        [job] = await queue.fetch<T>(name, { batchSize: 1, includeMetadata: true });
      } catch (e) {
        if (stopped) return;
        log(`[${name}] could not fetch: ${(e as Error).message}`);
      }
      if (!job) {
        await sleep(IDLE_POLL_MS);
        continue;
      }
      try {
        await handle(job);
        await queue.complete(name, job.id);
      } catch (e) {
        await queue.fail(name, job.id, { message: e instanceof Error ? e.message : String(e) }).catch(() => {});
      }
    }
  };
  const slots = Array.from({ length: concurrency }, slot);
  return {
    /** stops taking jobs; resolves when the jobs in hand are done */
    stop: async () => {
      stopped = true;
      await Promise.all(slots);
    },
  };
}
