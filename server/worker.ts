import { availableParallelism, hostname } from 'node:os';
import { parseArgs } from 'node:util';
import { ConfigError, loadConfig } from './config';
import { DatabaseUnreachableError, openServerDatabase, redacted } from './db/client';
import { toShared, type FitContext, type RefitBatch } from './fit';
import { createFitPool } from './runs/threads/pool';
import { coordinateFit, coordinateScan } from './runs/queue/coordinate';
import { scanToyThreads } from './runs/scan-outcome';
import { QUEUES, startQueue, takeJobs, workShards } from './runs/queue/queue';
import { failCoordinatedBy, startHeartbeat } from './runs/queue/heartbeat';
import { coordinateToys, toyBatchWorker, toyThreads } from './runs/toys';

/**
 * A worker process: takes fits, refit shards, toy runs, toy batches and scans over signal
 * hypotheses from the queue in the
 * PostgreSQL server at DATABASE_URL, runs the engine, stores the results. Start as many as the
 * machines have cores for, on any machine that reaches the database (docs/scaling.md).
 *
 *   npm run worker -- [--threads N] [--name NAME]
 */
async function main() {
  const { values } = parseArgs({ options: { threads: { type: 'string' }, name: { type: 'string' } } });
  const config = loadConfig();
  if (!config.DATABASE_URL) throw new ConfigError('A worker needs DATABASE_URL: the postgres:// address of the PostgreSQL server that holds the queue (see README, "PostgreSQL and workers").');
  const threads = values.threads === undefined ? (config.FIT_THREADS ?? availableParallelism()) : Number(values.threads);
  if (!Number.isInteger(threads) || threads < 1 || threads > 256) throw new ConfigError(`--threads must be a whole number from 1 to 256, not "${values.threads}".`);
  const name = values.name ?? `${hostname()}:${process.pid}`;
  const log = (line: string) => console.error(`[worker ${name}] ${line}`);

  const database = await openServerDatabase(config.DATABASE_URL, 4 + 2 * threads);
  const queue = await startQueue(config.DATABASE_URL, log);
  const heartbeat = await startHeartbeat(database.db, config.DATABASE_URL, name, threads);
  const refits = createFitPool({ threads, niceness: config.FIT_NICENESS });
  // toy batches on T threads, and a thread for the plan of a toy run this worker coordinates
  const toys = toyThreads(threads, config.FIT_NICENESS);
  // the toys of a scan's global significance, on T threads of their own while this worker coordinates one
  let scanToys: ReturnType<typeof scanToyThreads> | null = null;

  const refitShards = await workShards<FitContext[], RefitBatch['tasks'], unknown>(database.db, queue, {
    queue: QUEUES.refits,
    worker: name,
    concurrency: threads,
    // in shared memory, so that each batch sent to a thread copies only the small fields
    prepare: (input) => toShared(input) as FitContext[],
    compute: (contexts, tasks) => refits.runBatch({ contexts, tasks }),
    log,
  });
  const toyShards = await workShards(database.db, queue, { queue: QUEUES.toyBatch, worker: name, concurrency: threads, ...toyBatchWorker(toys), log });
  const fitJobs = takeJobs<{ fitId: number }>(queue, QUEUES.fit, 1, async (job) => {
    log(`fit ${job.data.fitId}: started${job.retryCount ? ' (retry)' : ''}`);
    await coordinateFit(database.db, queue, job.data.fitId, log, name);
    log(`fit ${job.data.fitId}: done`);
  }, log);
  const toyJobs = takeJobs<{ toyRunId: number }>(queue, QUEUES.toys, 1, async (job) => {
    log(`toy run ${job.data.toyRunId}: started${job.retryCount ? ' (retry)' : ''}`);
    await coordinateToys(database.db, queue, toys, job.data.toyRunId, log, name);
    log(`toy run ${job.data.toyRunId}: done`);
  }, log);
  const scanJobs = takeJobs<{ scanId: number }>(queue, QUEUES.scan, 1, async (job) => {
    log(`scan ${job.data.scanId}: started${job.retryCount ? ' (retry)' : ''}`);
    await coordinateScan(database.db, queue, job.data.scanId, { threads, pool: () => (scanToys ??= scanToyThreads(threads, config.FIT_NICENESS)) }, log, name);
    log(`scan ${job.data.scanId}: done`);
  }, log);
  console.log(`Plumbline worker ${name} is taking work from ${redacted(config.DATABASE_URL)} with ${threads} engine thread(s).`);

  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    // a fit or toy run being coordinated here is failed with that reason (its job is not taken
    // up again); shards in hand are finished first, they are short
    void fitJobs.stop();
    void toyJobs.stop();
    void scanJobs.stop();
    await failCoordinatedBy(database.db, name).catch((e) => log(`could not mark its runs: ${(e as Error).message}`));
    await heartbeat.stop();
    await Promise.race([Promise.all([refitShards.stop(), toyShards.stop()]), new Promise((r) => setTimeout(r, 10_000))]);
    await queue.stop({ graceful: false, wait: true, timeout: 5000 }).catch(() => {});
    await refits.destroy();
    await toys.close();
    await scanToys?.destroy();
    await database.close();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((e) => {
  if (e instanceof ConfigError || e instanceof DatabaseUnreachableError) console.error(e.message);
  else console.error(e);
  process.exit(1);
});
