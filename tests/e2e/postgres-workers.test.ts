import { readdirSync, readFileSync } from 'node:fs';
import { spawn, type ChildProcess } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import pg from 'pg';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitResult } from '@shared/schemas/fit';
import type { ToyRun } from '@shared/schemas/toys';
import { hypothesisScanOptionsSchema, type HypothesisScan, type HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { scanOutcome, scanToyThreads } from '../../server/runs/scan-outcome';
import { modelForScan } from '../../server/runs/hypothesis-scan-runner';
import { startPostgres, type PostgresServer } from '../../scripts/postgres-server';
import { fitModel, type FitPool } from '../../server/fit';
import { createFitPool } from '../../server/runs/threads/pool';
import { prepareToys, runToys, summariseToys } from '../../server/fit/toys';
import { openServerDatabase, type Database } from '../../server/db/client';
import { storedResult } from '../../server/db/fits.repository';
import { QUEUES, runSharded, ShardFailedError, startQueue, workShards, type Queue } from '../../server/runs/queue/queue';
import { startHeartbeat } from '../../server/runs/queue/heartbeat';
import { workClaims } from '../../server/db/schema';
import { toyBatches } from '../../server/runs/toys';
import { DEMO, PASSWORD } from '../server/helpers';
import { startServer, type RunningServer } from './support';

/**
 * The app on a PostgreSQL server from Debian's packages (.ci/run installs it when missing), with
 * two worker processes: a full-impacts fit is split across both and equals the embedded result;
 * toys through the queue equal toys run in one thread; a scan over signal hypotheses split across
 * both equals the scan in one process; a shard is retried once, then fails its run.
 */
let postgres: PostgresServer;
let server: RunningServer;
const workers: { name: string; child: ChildProcess; output: () => string }[] = [];

function startWorker(name: string, url: string) {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker.ts', '--threads', '1', '--name', name], { env: { ...process.env, DATABASE_URL: url }, stdio: ['ignore', 'pipe', 'pipe'] });
  let output = '';
  child.stdout!.on('data', (d) => (output += d));
  child.stderr!.on('data', (d) => (output += d));
  const ready = new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`worker ${name} did not start in 60 s:\n${output}`)), 60_000);
    child.stdout!.on('data', () => output.includes('is taking work') && (clearTimeout(timer), resolve()));
    child.on('exit', (code) => reject(new Error(`worker ${name} exited with ${code}:\n${output}`)));
  });
  workers.push({ name, child, output: () => output });
  return ready;
}

async function until<T>(what: string, read: () => Promise<T>, done: (v: T) => boolean, seconds = 240): Promise<T> {
  const end = Date.now() + seconds * 1000;
  for (;;) {
    const v = await read();
    if (done(v)) return v;
    if (Date.now() > end) throw new Error(`${what}: still ${JSON.stringify(v).slice(0, 300)} after ${seconds} s`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

/** JSON as the API serves it (−0 becomes 0), without the wall-clock time. */
function comparable(result: FitResult) {
  const copy = JSON.parse(JSON.stringify(result)) as FitResult;
  copy.convergence.seconds = 0;
  return copy;
}

beforeAll(async () => {
  postgres = await startPostgres();
}, 120_000);

afterAll(async () => {
  await Promise.all(
    workers.map(
      (w) =>
        new Promise<void>((resolve) => {
          if (w.child.exitCode !== null) return resolve();
          w.child.once('exit', () => resolve());
          w.child.kill('SIGTERM');
        }),
    ),
  );
  await server?.stop();
  postgres?.stop();
}, 60_000);

describe('shards on the queue', () => {
  let database: Database;
  let queue: Queue;
  const attempts = new Map<string, number>();
  let shards: { stop: () => Promise<void> };
  let heartbeat: { stop: () => Promise<void> };

  beforeAll(async () => {
    database = await openServerDatabase(postgres.url, 4);
    queue = await startQueue(postgres.url, () => {});
    heartbeat = await startHeartbeat(database.db, postgres.url, 'test-process', 2);
    // this process takes shards too, on a queue of its own runs: "flaky" fails each shard's first attempt, "broken" every attempt
    shards = await workShards<string, number, number>(database.db, queue, {
      queue: QUEUES.refits,
      worker: 'test-process',
      concurrency: 2,
      prepare: (input) => input as string,
      compute: async (kind, n) => {
        const key = `${kind}:${n}`;
        attempts.set(key, (attempts.get(key) ?? 0) + 1);
        if (kind === 'broken' && n === 1) throw new Error('shard 2 cannot be computed');
        if (kind === 'flaky' && attempts.get(key) === 1) throw new Error('first attempt fails');
        return n * n;
      },
      log: () => {},
    });
  }, 60_000);

  afterAll(async () => {
    await shards?.stop();
    await heartbeat?.stop();
    await queue?.stop({ graceful: false, wait: true, timeout: 5000 });
    await database?.close();
  });

  // runs before the app's workers start, so that this process alone takes these shards
  it('retries a failed shard once and then gives its output', async () => {
    const outputs = await runSharded<number, number>(database.db, queue, { run: `flaky-${Date.now()}`, queue: QUEUES.refits, input: 'flaky', payloads: [1, 2, 3] });
    expect(outputs).toEqual([1, 4, 9]);
    // each shard ran twice: the failed first attempt, then the retry
    expect([1, 2, 3].map((n) => attempts.get(`flaky:${n}`))).toEqual([2, 2, 2]);
  }, 60_000);

  it('fails the run with the reason when a shard fails on its retry too', async () => {
    const run = runSharded<number, number>(database.db, queue, { run: `broken-${Date.now()}`, queue: QUEUES.refits, input: 'broken', payloads: [0, 1, 2] });
    await expect(run).rejects.toThrow(ShardFailedError);
    await expect(run).rejects.toThrow(/shard 2 of 3 failed twice .*shard 2 cannot be computed/);
    // once, and once more: no third attempt
    expect(attempts.get('broken:1')).toBe(2);
  }, 60_000);

  it('sends a shard again when the worker that took it is no longer seen', async () => {
    // a run on the toy-batch queue, which no one here takes yet
    const run = `lost-${Date.now()}`;
    const outputs = runSharded<number, number>(database.db, queue, { run, queue: QUEUES.toyBatch, input: 'plain', payloads: [7] });
    // a worker takes the shard and vanishes: the job stays active, its claim names a worker never seen
    let taken: unknown[] = [];
    for (let k = 0; k < 50 && taken.length === 0; k++) {
      taken = await queue.fetch(QUEUES.toyBatch, { batchSize: 1 });
      if (!taken.length) await new Promise((r) => setTimeout(r, 100));
    }
    expect(taken).toHaveLength(1);
    await database.db.insert(workClaims).values({ run, shard: 0, worker: 'vanished-worker' });
    // now this process takes toy batches too: it gets the shard only if it is sent again
    const rescue = await workShards<string, number, number>(database.db, queue, {
      queue: QUEUES.toyBatch,
      worker: 'test-process',
      concurrency: 1,
      prepare: (input) => input as string,
      compute: async (_kind, n) => n * 3,
      log: () => {},
    });
    try {
      expect(await outputs).toEqual([21]);
    } finally {
      await rescue.stop();
    }
  }, 60_000);
});

describe('PostgreSQL server, two web server processes on one port, and two worker processes', () => {
  beforeAll(async () => {
    server = await startServer({ DATABASE_URL: postgres.url, WEB_PROCESSES: '2' });
    await Promise.all([startWorker('worker-one', postgres.url), startWorker('worker-two', postgres.url)]);
  }, 180_000);
  let analyst: ReturnType<typeof request.agent>;
  const send = async (method: 'post', path: string, body: object) => {
    const token = (await analyst.get('/api/auth/csrf')).body.token as string;
    return analyst[method](path).set('x-csrf-token', token).send(body);
  };
  let fitId = 0;
  let version = 0;
  const A = '/api/analyses/cascade-rate';

  it('serves the app from the server database through both web server processes: sign-in, a frozen version', async () => {
    // node:cluster: the process started forks two web server processes that share the port
    const children = readdirSync('/proc')
      .filter((d) => /^\d+$/.test(d))
      .filter((d) => {
        try {
          // a node process whose parent is the server; tsx's esbuild service is a child too
          const stat = readFileSync(`/proc/${d}/stat`, 'utf8');
          return stat.includes('(node)') && stat.split(') ')[1].split(' ')[1] === String(server.process.pid);
        } catch {
          return false;
        }
      });
    expect(children).toHaveLength(2);
    expect(server.output()).toMatch(/2 web server processes share the port/);
    analyst = request.agent(server.url);
    expect((await send('post', '/api/auth/sign-in', { email: DEMO.analyst, password: PASSWORD })).status).toBe(200);
    // a session made by one process holds in the other: every request of these may reach either
    const cookie = analyst.jar.getCookies({ domain: new URL(server.url).hostname, path: '/', secure: false, script: false }).toValueString();
    for (let i = 0; i < 10; i++) {
      const res = await request(server.url).get('/api/analyses').set('Cookie', cookie);
      expect(res.status, `request ${i + 1} with ${cookie}: ${res.text}`).toBe(200);
    }
    const frozen = await send('post', `${A}/versions`, { note: 'for the workers' });
    expect(frozen.status).toBe(201);
    version = frozen.body.number;
  });

  it('splits a full-impacts fit across both workers, and its result equals the embedded one', async () => {
    const options = { impacts: 'full', scan: true, scanPoints: 9, limit: true } as const;
    const started = await send('post', `${A}/fits`, { version, label: 'on the workers', options });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    fitId = started.body.id;
    const fit = await until(
      'the fit',
      async () => (await analyst.get(`${A}/fits/${fitId}`)).body,
      (b) => b.state !== 'queued' && b.state !== 'running',
    );
    expect(fit.state, fit.failure ?? '').toBe('succeeded');

    const db = new pg.Client({ connectionString: postgres.url });
    await db.connect();
    try {
      const { rows } = await db.query('select f.workers, v.model from fits f join model_versions v on v.id = f.model_version_id where f.id = $1', [fitId]);
      const shards = rows[0].workers as Record<string, number>;
      // both took part: the refits of one fit went to two processes
      expect(Object.keys(shards).sort()).toEqual(['worker-one', 'worker-two']);
      expect(Math.min(...Object.values(shards))).toBeGreaterThan(0);

      // the embedded path: the same model and options, refits on this process's threads
      let pool: FitPool | null = null;
      try {
        pool = createFitPool({ threads: 2 });
        const embedded = await fitModel(exchangeModelSchema.parse(rows[0].model), fitOptionsSchema.parse(options), { pool });
        expect(embedded.status).toBe('converged');
        expect(embedded.nuisance.some((n) => n.postfitImpact !== null)).toBe(true);
        const store = await openServerDatabase(postgres.url, 1);
        try {
          expect(comparable((await storedResult(store.db, fitId)) as FitResult)).toEqual(comparable(embedded));
        } finally {
          await store.close();
        }
      } finally {
        await pool?.destroy();
      }
    } finally {
      await db.end();
    }
  }, 300_000);

  it('runs toys on both workers with the same numbers as one thread', async () => {
    const started = await send('post', `${A}/fits/${fitId}/toys`, { count: 120, hypothesis: { kind: 'fixed-mu', mu: 0 }, seed: 2026 });
    expect(started.status).toBe(202);
    const run = await until(
      'the toys',
      async () => (await analyst.get(`${A}/toys/${started.body.id}`)).body as ToyRun,
      (r) => r.state !== 'queued' && r.state !== 'running',
    );
    expect(run.state, run.failure ?? '').toBe('succeeded');
    expect(run.workers).toBe(2);

    const db = new pg.Client({ connectionString: postgres.url });
    await db.connect();
    try {
      const { rows } = await db.query('select f.options, v.model from fits f join model_versions v on v.id = f.model_version_id where f.id = $1', [fitId]);
      const model = exchangeModelSchema.parse(rows[0].model);
      const options = fitOptionsSchema.parse(rows[0].options);
      const plan = prepareToys(model, options, { kind: 'fixed-mu', mu: 0 });
      const outcomes = runToys(model, options, plan, 2026, toyBatches(120).flat());
      expect(JSON.parse(JSON.stringify(run.summary))).toEqual(JSON.parse(JSON.stringify(summariseToys(plan, outcomes, 120))));
    } finally {
      await db.end();
    }
  }, 300_000);

  it('splits a scan over signal hypotheses across both workers, with the numbers of the scan in one process', async () => {
    const P = '/api/analyses/vireon-pilot';
    const frozen = await send('post', `${P}/versions`, { note: 'for the workers' });
    expect(frozen.status).toBe(201);
    const options = { dataset: 'observed', limit: true, referenceLevel: 0.5, upcrossingToys: 12, trialsToys: 12, seed: 4 } as const;
    const started = await send('post', `${P}/hypothesis-scans`, { version: frozen.body.number, label: 'on the workers', options });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    const scan = await until(
      'the scan',
      async () => (await analyst.get(`${P}/hypothesis-scans/${started.body.id}`)).body as HypothesisScan,
      (b) => b.state !== 'queued' && b.state !== 'running',
    );
    expect(scan.state, scan.failure ?? '').toBe('succeeded');

    const db = new pg.Client({ connectionString: postgres.url });
    await db.connect();
    let pool: FitPool | null = null;
    let toys = null as ReturnType<typeof scanToyThreads> | null;
    try {
      const { rows } = await db.query('select s.workers, s.coordinated_by, s.regions_in_fit, v.model from hypothesis_scans s join model_versions v on v.id = s.model_version_id where s.id = $1', [started.body.id]);
      // the hypotheses' refits went to both workers, and one of them coordinated the scan
      expect(Object.keys(rows[0].workers as Record<string, number>).sort()).toEqual(['worker-one', 'worker-two']);
      expect(['worker-one', 'worker-two']).toContain(rows[0].coordinated_by);
      // in one process: the same model, options and seed, refits and toys on this process's threads
      pool = createFitPool({ threads: 2 });
      const here = await scanOutcome(modelForScan(exchangeModelSchema.parse(rows[0].model), rows[0].regions_in_fit), hypothesisScanOptionsSchema.parse(options), {
        pool,
        toys: () => (toys ??= scanToyThreads(2, 0)),
        toyThreads: 2,
        onProgress: () => {},
      });
      if (!here.ok) throw new Error(here.message);
      const comparable = (r: HypothesisScanResult) => ({ ...JSON.parse(JSON.stringify(r)), seconds: 0 });
      expect(comparable(scan.result!)).toEqual(comparable(here.result));
      expect(scan.result!.global!.upcrossings.toys!.count).toBe(12);
    } finally {
      await pool?.destroy();
      await toys?.destroy();
      await db.end();
    }
  }, 300_000);

  it('fails a run whose coordinating worker is no longer seen, and leaves one whose worker is alive', async () => {
    const db = new pg.Client({ connectionString: postgres.url });
    await db.connect();
    try {
      // both workers keep their rows fresh
      const { rows: seen } = await db.query("select name from worker_processes where seen_at > now() - interval '30 seconds' order by name");
      expect(seen.map((r) => r.name)).toEqual(['worker-one', 'worker-two']);
      const insert = (by: string) =>
        db.query("insert into fits (analysis_id, model_version_id, options, state, coordinated_by) select analysis_id, model_version_id, '{}', 'running', $2 from fits where id = $1 returning id", [fitId, by]);
      const ghost = (await insert('vanished-worker')).rows[0].id;
      const alive = (await insert('worker-one')).rows[0].id;
      // the server's sweep, every 10 s
      const row = await until(
        'the sweep',
        async () => (await db.query('select state, failure from fits where id = $1', [ghost])).rows[0],
        (r) => r.state !== 'running',
        40,
      );
      expect(row.state).toBe('failed');
      expect(row.failure).toMatch(/\(vanished-worker\) stopped or lost the database/);
      expect((await db.query('select state from fits where id = $1', [alive])).rows[0].state).toBe('running');
      await db.query("update fits set state = 'failed' where id = $1", [alive]);
    } finally {
      await db.end();
    }
  }, 60_000);

  it('a worker stopped with SIGTERM fails the run it coordinates, with that reason', async () => {
    const started = await send('post', `${A}/fits/${fitId}/toys`, { count: 20_000, seed: 5 });
    expect(started.status).toBe(202);
    const db = new pg.Client({ connectionString: postgres.url });
    await db.connect();
    try {
      const running = await until(
        'the toys to start',
        async () => (await db.query('select state, coordinated_by from toy_runs where id = $1', [started.body.id])).rows[0],
        (r) => r.state === 'running' && r.coordinated_by !== null,
        60,
      );
      const coordinator = workers.find((w) => w.name === running.coordinated_by)!;
      coordinator.child.kill('SIGTERM');
      const run = await until(
        'the run to fail',
        async () => (await analyst.get(`${A}/toys/${started.body.id}`)).body as ToyRun,
        (r) => r.state !== 'running',
        30,
      );
      expect(run.state).toBe('failed');
      expect(run.failure).toBe(`The worker coordinating this run (${coordinator.name}) was stopped. Start it again; another worker will take it.`);
      expect(run.summary).toBeNull();
    } finally {
      await db.end();
    }
  }, 120_000);
});
