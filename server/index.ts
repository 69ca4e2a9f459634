import cluster from 'node:cluster';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import { availableParallelism } from 'node:os';
import express from 'express';
import { createApp } from './app';
import { ConfigError, loadConfig, type Config } from './config';
import { DatabaseUnreachableError, DataDirLockedError, openDatabase, projectRoot, redacted } from './db/client';
import { createMailer } from './mail/mailer';
import { outboxStore } from './db/outbox.repository';
import { createFitRunner } from './runs/fit-runner';
import { createToyRunner } from './runs/toy-runner';
import { createHypothesisScanRunner } from './runs/hypothesis-scan-runner';
import { startQueue } from './runs/queue/queue';
import { queuedFitRunner, queuedScanRunner, queuedToyRunner } from './runs/queue/queued-runners';
import { seedDemo } from './seed/demo';
import { seedStory, storyPending } from './seed/story';
import { backfillEffectSizes } from './services/register.service';

/** Without SESSION_SECRET, a random secret is kept in the data folder so sessions survive restarts. */
function sessionSecret(config: Config) {
  if (config.sessionSecret) return config.sessionSecret;
  const file = path.join(config.dataDir, 'session-secret');
  mkdirSync(config.dataDir, { recursive: true });
  if (!existsSync(file)) writeFileSync(file, randomBytes(32).toString('hex'), { mode: 0o600 });
  return readFileSync(file, 'utf8').trim();
}

async function serveClient(app: express.Express, config: Config) {
  if (config.NODE_ENV === 'development') {
    const { createServer } = await import('vite');
    const vite = await createServer({
      root: projectRoot,
      server: { middlewareMode: true, watch: { ignored: ['**/data/**', '**/test-output/**'] } },
      appType: 'spa',
    });
    app.use(vite.middlewares);
    return () => vite.close();
  }
  const dist = path.join(projectRoot, 'dist/client');
  if (!existsSync(path.join(dist, 'index.html'))) throw new ConfigError(`The client is not built (${dist} is missing). Run "npm run build" first.`);
  app.use(express.static(dist, { index: false, maxAge: '1h' }));
  app.get('/{*splat}', (_req, res) => res.sendFile(path.join(dist, 'index.html')));
  return async () => {};
}

type Demo = Awaited<ReturnType<typeof seedDemo>>;

/** Opens the database (migrations run under a lock), writes the demo into an empty one, and fills what older versions left out. */
async function prepare(config: Config) {
  const database = await openDatabase(config.dataDir, config.DATABASE_URL);
  const seed = await seedDemo(database.db);
  await backfillEffectSizes(database.db);
  return { database, seed };
}

function announce(config: Config, port: number, seed: Demo, mail: string) {
  const where = config.DATABASE_URL ? `database ${redacted(config.DATABASE_URL)}; fits and toys run by worker processes (npm run worker)` : `data in ${config.dataDir}`;
  const processes = config.WEB_PROCESSES > 1 ? `; ${config.WEB_PROCESSES} web server processes share the port` : '';
  console.log(`Plumbline is running at http://localhost:${port} (${config.NODE_ENV}; ${where}${processes})`);
  console.log(`E-mail is ${mail}.`);
  if (seed.seeded) console.log('The invented demo scenario was written into the new database.');
  console.log(`Demo accounts (password for all: ${seed.password}):`);
  for (const a of seed.accounts) console.log(`  ${a.email.padEnd(26)} ${a.note}`);
}

/** One web server process: the API and the client on the port, fits and toys on its threads or the queue. */
async function serve(config: Config, prepared: Awaited<ReturnType<typeof prepare>> | null, onListening: (port: number, mail: string) => void) {
  const { database } = prepared ?? { database: await openDatabase(config.dataDir, config.DATABASE_URL) };
  const mailer = await createMailer(outboxStore(database.db), config);
  const threads = config.FIT_THREADS ?? Math.max(1, availableParallelism() - 1);
  const local = createFitRunner(database.db, console.error, { threads, niceness: config.FIT_NICENESS });
  // with a PostgreSQL server, fits, toys and scans wait on its queue for worker processes
  const queue = config.DATABASE_URL ? await startQueue(config.DATABASE_URL, console.error) : null;
  const fits = queue ? queuedFitRunner(database.db, queue, local) : local;
  const toys = queue ? queuedToyRunner(database.db, queue) : createToyRunner(database.db, console.error, { threads, niceness: config.FIT_NICENESS });
  const scans = queue ? queuedScanRunner(database.db, queue) : createHypothesisScanRunner(database.db, console.error, { threads, niceness: config.FIT_NICENESS });
  await fits.recover();
  await toys.recover();
  await scans.recover();
  const { app, ctx } = createApp(database, config, { mailer, fits, toys, scans });
  // the demo's story on its first start: fits computed, questions asked, mail sent (seed/story.ts)
  if ((prepared || process.env.PLUMBLINE_STORY === '1') && (await storyPending(ctx))) {
    const started = Date.now();
    await seedStory(ctx, (config.PUBLIC_URL ?? `http://localhost:${config.PORT || 3000}`).replace(/\/$/, ''), { waitForFits: !queue });
    console.log(`The demo's fits, questions and e-mails were made in ${((Date.now() - started) / 1000).toFixed(1)} s.`);
  }
  const closeClient = await serveClient(app, config);

  const server = app.listen(config.PORT, config.HOST, () => {
    const address = server.address();
    onListening(typeof address === 'object' && address ? address.port : config.PORT, mailer.describe());
  });

  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    server.close();
    await closeClient();
    await scans.close();
    await toys.close();
    await fits.close();
    await queue?.stop({ graceful: false, wait: true, timeout: 5000 }).catch(() => {});
    await mailer.close();
    await database.close();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

/**
 * With WEB_PROCESSES above 1 (a PostgreSQL server only), this process prepares the database once
 * and starts that many web server processes sharing the port (node:cluster deals out the
 * connections); a process that dies is started again. Nothing is kept in memory on a server
 * database, so any process may answer any request.
 */
async function primary(config: Config) {
  const { database, seed } = await prepare(config);
  await database.close();
  let listening = 0;
  let stopping = false;
  // the first web server process tells the demo's story, if it has not been told
  let first = true;
  const start = () => {
    const env = first ? { PLUMBLINE_STORY: '1' } : {};
    first = false;
    return cluster.fork(env).on('message', (m: { port?: number; mail?: string }) => {
      if (m.port !== undefined && ++listening === config.WEB_PROCESSES) announce(config, m.port, seed, m.mail ?? '');
    });
  };
  for (let i = 0; i < config.WEB_PROCESSES; i++) start();
  cluster.on('exit', (worker, code, signal) => {
    if (stopping) return;
    console.error(`A web server process (pid ${worker.process.pid}) ended (${signal ?? `code ${code}`}); starting another.`);
    start();
  });
  const stop = () => {
    stopping = true;
    for (const w of Object.values(cluster.workers ?? {})) w?.kill('SIGTERM');
    const check = setInterval(() => Object.keys(cluster.workers ?? {}).length === 0 && process.exit(0), 100);
    check.unref();
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

async function main() {
  if (process.argv.includes('--dev')) process.env.NODE_ENV = 'development';
  const base = loadConfig();
  const config = { ...base, sessionSecret: sessionSecret(base) };
  if (config.WEB_PROCESSES > 1 && cluster.isPrimary) return primary(config);
  if (cluster.isWorker) return serve(config, null, (port, mail) => process.send?.({ port, mail }));
  const prepared = await prepare(config);
  await serve(config, prepared, (port, mail) => announce(config, port, prepared.seed, mail));
}

main().catch((e) => {
  if (e instanceof ConfigError || e instanceof DataDirLockedError || e instanceof DatabaseUnreachableError) console.error(e.message);
  else console.error(e);
  process.exit(1);
});
