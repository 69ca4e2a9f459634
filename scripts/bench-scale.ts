import { spawn, type ChildProcess } from 'node:child_process';
import { loadavg } from 'node:os';
import { eq } from 'drizzle-orm';
import { openServerDatabase } from '../server/db/client';
import { analyses, fits, modelVersions, toyRuns } from '../server/db/schema';
import { fitModel, syntheticModel } from '../server/fit';
import { createFitPool } from '../server/runs/threads/pool';
import { prepareToys } from '../server/fit/toys';
import { toyBatches, toyThreads } from '../server/runs/toys';
import { fitOptionsSchema } from '@shared/schemas/fit';
import { QUEUES, startQueue } from '../server/runs/queue/queue';
import { startPostgres } from './postgres-server';

/**
 * npm run bench:scale — the queued path on this machine, with 1 and then 2 worker processes (one
 * engine thread each) on a throwaway PostgreSQL server from Debian's packages:
 *   - a full-impacts fit of the large synthetic model (the worker that takes it makes the
 *     minimum; the refits go back to the queue as shards for every worker);
 *   - 1000 toys of the medium synthetic model, drawn at its best fit, in batches of 25.
 * Prints wall times from the moment the work is queued to the moment its row says done, and the
 * speed-up of 2 workers over 1 (target: at least 1.7×). First, as the machine's own ceiling, the
 * same work in one process with 1 and then 2 engine threads and no queue.
 *
 *   npm run bench:scale [-- --toys N --repeat K]
 */
const args = process.argv.slice(2);
const option = (name: string, fallback: number) => {
  const at = args.indexOf(`--${name}`);
  return at >= 0 ? Number(args[at + 1]) : fallback;
};
const TOYS = option('toys', 1000);
const REPEAT = option('repeat', 1);

const postgres = await startPostgres();
const database = await openServerDatabase(postgres.url, 4);
const db = database.db;
const queue = await startQueue(postgres.url, (line) => console.error(line));

async function insertModel(slug: string, size: 'large' | 'medium') {
  const [a] = await db.insert(analyses).values({ slug, name: `Benchmark: ${size} model`, blinding: 'unblinded' }).returning();
  const [v] = await db.insert(modelVersions).values({ analysisId: a.id, number: 1, model: { ...syntheticModel(size), name: slug }, sha256: size }).returning();
  return { analysisId: a.id, versionId: v.id };
}

async function waitFor(read: () => Promise<{ state: string; failure: string | null } | undefined>, what: string) {
  for (;;) {
    const row = await read();
    if (row && row.state !== 'queued' && row.state !== 'running') {
      if (row.state !== 'succeeded') throw new Error(`${what} ended ${row.state}: ${row.failure}`);
      return;
    }
    await new Promise((r) => setTimeout(r, 50));
  }
}

async function runFit(model: { analysisId: number; versionId: number }, options: object) {
  const [f] = await db.insert(fits).values({ analysisId: model.analysisId, modelVersionId: model.versionId, options }).returning();
  const t0 = performance.now();
  await queue.send(QUEUES.fit, { fitId: f.id });
  await waitFor(async () => (await db.select().from(fits).where(eq(fits.id, f.id)))[0], `fit ${f.id}`);
  const [row] = await db.select({ workers: fits.workers }).from(fits).where(eq(fits.id, f.id));
  return { id: f.id, seconds: (performance.now() - t0) / 1000, workers: row.workers };
}

async function runToys(analysisId: number, fitId: number) {
  const [r] = await db.insert(toyRuns).values({ analysisId, fitId, count: TOYS, hypothesis: { kind: 'best-fit' }, seed: 2026 }).returning();
  const t0 = performance.now();
  await queue.send(QUEUES.toys, { toyRunId: r.id });
  await waitFor(async () => (await db.select().from(toyRuns).where(eq(toyRuns.id, r.id)))[0], `toy run ${r.id}`);
  const [row] = await db.select({ workers: toyRuns.workers, summary: toyRuns.summary }).from(toyRuns).where(eq(toyRuns.id, r.id));
  return { seconds: (performance.now() - t0) / 1000, workers: row.workers, converged: (row.summary as { converged: number }).converged };
}

function startWorkers(n: number): Promise<ChildProcess[]> {
  return Promise.all(
    Array.from({ length: n }, (_, k) => {
      const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker.ts', '--threads', '1', '--name', `bench-${k + 1}`], {
        env: { ...process.env, DATABASE_URL: postgres.url, FIT_NICENESS: '0' },
        stdio: ['ignore', 'pipe', 'inherit'],
      });
      return new Promise<ChildProcess>((resolve, reject) => {
        child.stdout!.on('data', (d: Buffer) => d.toString().includes('is taking work') && resolve(child));
        child.on('exit', (code) => reject(new Error(`worker exited with ${code}`)));
      });
    }),
  );
}

async function stopWorkers(children: ChildProcess[]) {
  await Promise.all(children.map((c) => new Promise((r) => (c.once('exit', r), c.kill('SIGTERM')))));
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const f2 = (x: number) => x.toFixed(2);

/** The same work in this process on 1 and 2 threads, no database: what two threads give on this machine. */
async function ceiling() {
  const out: Record<number, { impacts: number; toys: number }> = {};
  const large = syntheticModel('large');
  const medium = syntheticModel('medium');
  const options = fitOptionsSchema.parse({ impacts: 'none' });
  const plan = prepareToys(medium, options, { kind: 'best-fit' });
  for (const n of [1, 2]) {
    const pool = createFitPool({ threads: n });
    const toys = toyThreads(n, 0);
    try {
      await fitModel(large, { impacts: 'full' }, { pool });
      let t0 = performance.now();
      await fitModel(large, { impacts: 'full' }, { pool });
      const impacts = (performance.now() - t0) / 1000;
      t0 = performance.now();
      await Promise.all(toyBatches(TOYS).map((indices) => toys.run({ model: medium, options, plan, seed: 2026, indices, key: `ceiling-${n}` })));
      out[n] = { impacts, toys: (performance.now() - t0) / 1000 };
      console.log(`one process, ${n} thread(s): large full impacts ${f2(impacts)} s, ${TOYS} toys ${f2(out[n].toys)} s`);
    } finally {
      await pool.destroy();
      await toys.close();
    }
  }
  return out;
}

try {
  const machine = await ceiling();
  console.log(`PostgreSQL at ${postgres.url}; load average before: ${loadavg().map(f2).join(' ')}`);
  const large = await insertModel('bench-large', 'large');
  const medium = await insertModel('bench-medium', 'medium');
  const results: Record<number, { impacts: number[]; toys: number[] }> = {};
  let mediumFit = 0;
  for (const n of [1, 2]) {
    const children = await startWorkers(n);
    try {
      if (!mediumFit) mediumFit = (await runFit(medium, { impacts: 'none' })).id;
      // one warm-up of each, so that both settings start with compiled code and warm caches
      await runFit(large, { impacts: 'full' });
      results[n] = { impacts: [], toys: [] };
      for (let k = 0; k < REPEAT; k++) {
        const fit = await runFit(large, { impacts: 'full' });
        results[n].impacts.push(fit.seconds);
        console.log(`${n} worker(s): large full impacts ${f2(fit.seconds)} s (shards per worker: ${JSON.stringify(fit.workers)})`);
        const toys = await runToys(medium.analysisId, mediumFit);
        results[n].toys.push(toys.seconds);
        console.log(`${n} worker(s): ${TOYS} toys of the medium model ${f2(toys.seconds)} s (${toys.converged} converged; batches per worker: ${JSON.stringify(toys.workers)})`);
      }
    } finally {
      await stopWorkers(children);
    }
  }
  const one = results[1];
  const two = results[2];
  const impacts = median(one.impacts) / median(two.impacts);
  const toys = median(one.toys) / median(two.toys);
  const total = (median(one.impacts) + median(one.toys)) / (median(two.impacts) + median(two.toys));
  console.log('');
  console.log('| work | 1 worker | 2 workers | speed-up |');
  console.log('| --- | --- | --- | --- |');
  console.log(`| large model, full impacts | ${f2(median(one.impacts))} s | ${f2(median(two.impacts))} s | ${f2(impacts)}× |`);
  console.log(`| medium model, ${TOYS} toys | ${f2(median(one.toys))} s | ${f2(median(two.toys))} s | ${f2(toys)}× |`);
  console.log(`| both | ${f2(median(one.impacts) + median(one.toys))} s | ${f2(median(two.impacts) + median(two.toys))} s | ${f2(total)}× |`);
  console.log(`| ceiling: one process, no queue, 1 → 2 threads | impacts ${f2(machine[1].impacts)} → ${f2(machine[2].impacts)} s | toys ${f2(machine[1].toys)} → ${f2(machine[2].toys)} s | ${f2(machine[1].impacts / machine[2].impacts)}× / ${f2(machine[1].toys / machine[2].toys)}× |`);
  console.log('');
  console.log(`target ≥ 1.7× with 2 workers: impacts ${impacts >= 1.7 ? 'met' : 'missed'}, toys ${toys >= 1.7 ? 'met' : 'missed'}, both ${total >= 1.7 ? 'met' : 'missed'}`);
  console.log(`load average after: ${loadavg().map(f2).join(' ')}`);
} finally {
  await queue.stop({ graceful: false, wait: true, timeout: 5000 }).catch(() => {});
  await database.close();
  postgres.stop();
}
