import { spawn, type ChildProcess } from 'node:child_process';
import { readdirSync, readFileSync } from 'node:fs';
import os from 'node:os';
import { parseArgs } from 'node:util';
import autocannon from 'autocannon';
import type { MemberRole } from '@shared/permissions';
import { syntheticModel } from '../server/fit';
import { startServer } from '../tests/e2e/support';
import { startPostgres, type PostgresServer } from './postgres-server';
import { Session } from './bench-session';

/**
 * npm run bench:load — 200 signed-in people (200 accounts, each with its own session and CSRF
 * token) work on one analysis on loopback: mostly reading (the register, an entry, a fit result,
 * the questions, the model) and sometimes writing (editing an entry's description, renaming a
 * group, raising and answering questions), while full-impacts fits of the large benchmark model
 * run on the same server. Two paces, one after the other, each for BENCH_SECONDS (60 s):
 *
 *   - team: each person sends a request, then thinks for 1–3 s (uniformly at random), as a team
 *     at work does. Target: p99 under 250 ms and no errors.
 *   - saturation: each person sends the next request as soon as the last is answered; the
 *     throughput is what the server can serve.
 *
 * Prints throughput, latency percentiles (from every response), errors, timeouts and non-2xx
 * answers, per request kind, and whether the targets were met. Options:
 *
 *   --pace team|saturation|both      (default both)
 *   --postgres                       a throwaway PostgreSQL server (Debian's package) instead of the
 *                                    embedded database, with --web-processes web server processes
 *                                    sharing the port (default 2) and --workers worker processes
 *                                    taking the fits (default 2)
 *
 * In the saturation pace each person is an autocannon instance with one connection. autocannon
 * gives every connection of an instance a copy of the same initialContext and starts it afresh at
 * each pass through the request list, so a person's cookie, token and entry version live in that
 * person's closure. The team pace sends with fetch, one keep-alive connection per person.
 *
 * BENCH_SECONDS shortens each pace; BENCH_CONNECTIONS changes the number of people (at most 250).
 */
let args: { pace: string; postgres: boolean; 'web-processes': string; workers: string };
try {
  args = parseArgs({
    options: { pace: { type: 'string', default: 'both' }, postgres: { type: 'boolean', default: false }, 'web-processes': { type: 'string', default: '2' }, workers: { type: 'string', default: '2' } },
  }).values as typeof args;
  if (!['team', 'saturation', 'both'].includes(args.pace)) throw new Error(`--pace must be team, saturation or both, not "${args.pace}"`);
  for (const k of ['web-processes', 'workers'] as const) if (!/^[1-9]\d?$/.test(args[k])) throw new Error(`--${k} must be a whole number from 1 to 99, not "${args[k]}"`);
} catch (e) {
  console.error(`bench:load: ${(e as Error).message}`);
  process.exit(2);
}
const PACES = (args.pace === 'both' ? ['team', 'saturation'] : [args.pace]) as ('team' | 'saturation')[];
const PEOPLE = Number(process.env.BENCH_CONNECTIONS ?? 200);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 60);
const TARGET_P99_MS = 250;
/** how long the people may take to connect and sign in at a gentle pace before the load */
const CONNECT_LIMIT_S = 120;
const PASSWORD = 'bench-load-password';
const SLUG = 'bench-large';
const A = `/api/analyses/${SLUG}`;
/** how many questions are open before the load starts; people answer these */
const QUESTIONS = 10;

/** CPU time (user + system) of a process's main thread so far, from /proc (Linux); NaN elsewhere. */
function mainThreadCpuMs(pid: number | undefined): number {
  try {
    const fields = readFileSync(`/proc/${pid}/task/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100;
  } catch {
    return NaN;
  }
}

const percentile = (sorted: number[], p: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))] : NaN);
const seconds = (t: number) => `${(t / 1000).toFixed(1)} s`;
const ms = (t: number | undefined) => (t === undefined || Number.isNaN(t) ? '-' : Math.round(t));

/** Runs fn over items, `width` at a time (sign-ins and account creation hash passwords). */
async function inBatches<T, R>(items: T[], width: number, fn: (item: T, i: number) => Promise<R>): Promise<R[]> {
  const out: R[] = new Array(items.length);
  let next = 0;
  await Promise.all(
    Array.from({ length: width }, async () => {
      while (next < items.length) {
        const i = next++;
        out[i] = await fn(items[i], i);
      }
    }),
  );
  return out;
}

/** A team of this size: a few conveners, analysts, many systematics contacts, some readers. */
function roleOf(i: number): MemberRole {
  const r = i % 10;
  return r === 0 ? 'convener' : r <= 3 ? 'analyst' : r <= 8 ? 'contact' : 'reader';
}

type Person = { i: number; role: MemberRole; session: Session; entry: string; version: number; group: number | null };
type Kind = 'read' | 'write';
type Step = { kind: Kind; name: string; method: 'GET' | 'POST' | 'PATCH'; path: () => string; body?: () => unknown; onOk?: (body: string) => void };

/** The web server processes whose request threads serve the load: the server, or with node:cluster its node children. */
function webProcesses(pid: number, clustered: boolean): number[] {
  if (!clustered) return [pid];
  const read = (d: string, file: string) => {
    try {
      return readFileSync(`/proc/${d}/${file}`, 'utf8');
    } catch {
      return '';
    }
  };
  return readdirSync('/proc')
    .filter((d) => /^\d+$/.test(d) && read(d, 'stat').split(') ')[1]?.split(' ')[1] === String(pid) && read(d, 'comm').trim() === 'node')
    .map(Number);
}

function startWorkers(url: string, n: number): Promise<ChildProcess[]> {
  return Promise.all(
    Array.from({ length: n }, (_, k) => {
      const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker.ts', '--threads', '1', '--name', `load-${k + 1}`], {
        env: { ...process.env, DATABASE_URL: url },
        stdio: ['ignore', 'pipe', 'inherit'],
      });
      return new Promise<ChildProcess>((resolve, reject) => {
        child.stdout!.on('data', (d: Buffer) => d.toString().includes('is taking work') && resolve(child));
        child.on('exit', (code) => reject(new Error(`worker exited with ${code}`)));
      });
    }),
  );
}

type Tally = { count: number; non2xx: number; failed: number; times: number[] };

/** The figures of one pace, from every response in it. */
class Measure {
  readonly tallies = new Map<string, Tally>();
  readonly all: number[] = [];
  readonly failures: string[] = [];
  timeouts = 0;
  connectionErrors = 0;
  tallyOf(name: string) {
    return this.tallies.get(name) ?? (this.tallies.set(name, { count: 0, non2xx: 0, failed: 0, times: [] }), this.tallies.get(name)!);
  }
  response(step: Step, status: number, time: number, body?: string) {
    for (const t of [this.tallyOf(step.kind), this.tallyOf(step.name)]) {
      t.count++;
      if (status < 200 || status >= 300) t.non2xx++;
      t.times.push(time);
    }
    this.all.push(time);
    if ((status < 200 || status >= 300) && this.failures.length < 10) this.failures.push(`${step.method} ${step.name} -> ${status} ${body?.slice(0, 200) ?? ''}`);
  }
  noAnswer(step: Step, timedOut: boolean) {
    if (timedOut) this.timeouts++;
    else this.connectionErrors++;
    this.tallyOf(step.kind).failed++;
    this.tallyOf(step.name).failed++;
  }
  get non2xx() {
    return this.tallyOf('read').non2xx + this.tallyOf('write').non2xx;
  }
  print(title: string, elapsed: number, cpuUsed: number, loadBefore: number) {
    this.all.sort((a, b) => a - b);
    console.log(`\n${title}`);
    console.log(`machine: ${os.cpus().length} cores, load average ${loadBefore.toFixed(1)} before and ${os.loadavg()[0].toFixed(1)} after (the server, its fit threads and this load generator share them)`);
    if (!Number.isNaN(cpuUsed)) console.log(`the request threads used ${seconds(cpuUsed)} of CPU in ${seconds(elapsed * 1000)}: ${(cpuUsed / Math.max(1, this.all.length)).toFixed(2)} ms per response`);
    console.table({
      responses: this.all.length,
      'requests/s': Math.round(this.all.length / elapsed),
      'p50 ms': ms(percentile(this.all, 50)),
      'p95 ms': ms(percentile(this.all, 95)),
      'p99 ms': ms(percentile(this.all, 99)),
      'max ms': ms(this.all[this.all.length - 1]),
      'connection errors': this.connectionErrors,
      timeouts: this.timeouts,
      'non-2xx': this.non2xx,
    });
    const row = (t: Tally) => {
      const sorted = [...t.times].sort((a, b) => a - b);
      return {
        responses: t.count,
        share: `${((100 * t.count) / Math.max(1, this.all.length)).toFixed(1)} %`,
        'p50 ms': ms(percentile(sorted, 50)),
        'p99 ms': ms(percentile(sorted, 99)),
        'max ms': ms(sorted[sorted.length - 1]),
        'non-2xx': t.non2xx,
        'no answer': t.failed,
      };
    };
    const kinds: Kind[] = ['read', 'write'];
    console.table(Object.fromEntries(kinds.map((k) => [`${k}s`, row(this.tallyOf(k))])));
    const names = [...this.tallies.keys()].filter((n) => !kinds.includes(n as Kind)).sort();
    console.table(Object.fromEntries(names.map((n) => [n, row(this.tallyOf(n))])));
    if (this.failures.length) console.log(`first non-2xx answers:\n  ${this.failures.join('\n  ')}`);
  }
}

async function main() {
  let postgres: PostgresServer | null = null;
  let workers: ChildProcess[] = [];
  const env: Record<string, string> = { UPLOAD_LIMIT_BYTES: String(200_000_000), SIGN_IN_LIMIT: String(10 * PEOPLE + 100), SIGN_IN_ATTEMPT_LIMIT: String(10 * PEOPLE + 100) };
  if (args.postgres) {
    postgres = await startPostgres();
    Object.assign(env, { DATABASE_URL: postgres.url, WEB_PROCESSES: args['web-processes'] });
  }
  const server = await startServer(env);
  if (postgres) workers = await startWorkers(postgres.url, Number(args.workers));
  const where = postgres
    ? `a PostgreSQL server, ${args['web-processes']} web server process(es) sharing the port and ${args.workers} worker process(es) taking the fits`
    : 'the embedded database, fits on the server\u2019s own threads';
  console.log(`server on ${where}`);
  try {
    const admin = new Session(server.url);
    await admin.send('POST', '/api/auth/sign-in', { email: 'admin@lantern.example', password: 'lantern-demo-2026' });
    await admin.send('POST', '/api/analyses', { slug: SLUG, name: 'Benchmark: large model', blinded: false });
    await admin.send('POST', `${A}/members`, { email: 'admin@lantern.example', role: 'analyst' });
    const model = JSON.stringify({ ...syntheticModel('large'), name: SLUG });
    const form = new FormData();
    form.append('file', new Blob([model], { type: 'application/json' }), 'large.json');
    let t0 = Date.now();
    const imported = await admin.fetch(`${A}/exchange`, { method: 'POST', headers: { 'x-csrf-token': await admin.token() }, body: form });
    if (imported.status !== 201) throw new Error(`import: ${imported.status} ${await imported.text()}`);
    console.log(`imported the large model (${(model.length / 1e6).toFixed(1)} MB) in ${seconds(Date.now() - t0)}`);
    const version = (await admin.send('POST', `${A}/versions`, { note: 'benchmark' })).number;

    const waitFor = async (id: number) => {
      for (;;) {
        const fit = await admin.get(`${A}/fits/${id}`);
        if (!['queued', 'running'].includes(fit.state)) return fit;
        await new Promise((r) => setTimeout(r, 200));
      }
    };
    const quick = await admin.send('POST', `${A}/fits`, { version, label: 'quick', options: { dataset: 'observed', impacts: 'quick' } });
    const quickDone = await waitFor(quick.id);
    if (quickDone.state !== 'succeeded') throw new Error(`the quick fit ended ${quickDone.state}`);

    // the team: accounts, memberships, an entry for each person who edits one, a group for each analyst
    t0 = Date.now();
    const keys = ((await admin.get(`${A}/entries`)) as { key: string }[]).map((e) => e.key);
    if (keys.length < PEOPLE) throw new Error(`the model has ${keys.length} entries, fewer than ${PEOPLE} people`);
    const people: Person[] = await inBatches(
      Array.from({ length: PEOPLE }, (_, i) => i),
      4,
      async (i) => {
        const email = `bench-${i}@lantern.example`;
        const user = await admin.send('POST', '/api/users', { email, name: `Bench Person ${i}`, password: PASSWORD });
        const role = roleOf(i);
        await admin.send('POST', `${A}/members`, { email, role });
        const entry = keys[i];
        let { version: v } = await admin.get(`${A}/entries/${entry}`);
        // a systematics contact edits only the entries they own
        if (role === 'contact') v = (await admin.send('PATCH', `${A}/entries/${entry}`, { ownerId: user.id, version: v })).version;
        const group = role === 'analyst' ? (await admin.send('POST', `${A}/groups`, { name: `team ${i}` })).id : null;
        const session = new Session(server.url);
        await session.send('POST', '/api/auth/sign-in', { email, password: PASSWORD });
        return { i, role, session, entry, version: v, group };
      },
    );
    const conveners = people.filter((p) => p.role === 'convener');
    const questionIds: number[] = [];
    for (let q = 0; q < QUESTIONS; q++) {
      const asker = conveners[q % conveners.length].session;
      questionIds.push((await asker.send('POST', `${A}/questions`, { entry: keys[q], title: `Why is ${keys[q]} so narrow?`, body: 'Show where its information comes from.' })).id);
    }
    const roles = (['convener', 'analyst', 'contact', 'reader'] as const).map((r) => `${people.filter((p) => p.role === r).length} ${r}s`);
    console.log(`${PEOPLE} people signed in (${roles.join(', ')}), each with a session of their own, in ${seconds(Date.now() - t0)}`);

    const sizes = await Promise.all(
      [`${A}/entries`, `${A}/entries/${keys[0]}`, `${A}/fits/${quick.id}`, `${A}/questions`, `${A}/model`].map(async (p) => (await (await admin.fetch(p)).arrayBuffer()).byteLength),
    );
    console.log(`response sizes (uncompressed): register ${(sizes[0] / 1e3).toFixed(0)} kB, entry ${(sizes[1] / 1e3).toFixed(0)} kB, fit head ${(sizes[2] / 1e3).toFixed(0)} kB, questions ${(sizes[3] / 1e3).toFixed(0)} kB, model ${(sizes[4] / 1e3).toFixed(0)} kB`);

    /** What each person does, over and over: six reads, then one write (a reader reads an entry). */
    const stepsOf = (p: Person) => {
      let writes = 0;
      let visits = 0;
      let at = 0;
      const other = () => keys[(p.i * 7 + visits++) % keys.length];
      const entryEdit: Step = {
        kind: 'write',
        name: 'PATCH entry',
        method: 'PATCH',
        path: () => `${A}/entries/${p.entry}`,
        body: () => ({ description: `Edited by bench person ${p.i}, change ${writes}.`, version: p.version }),
        onOk: (body) => (p.version = (JSON.parse(body) as { version: number }).version),
      };
      const answer: Step = {
        kind: 'write',
        name: 'POST answer',
        method: 'POST',
        path: () => `${A}/questions/${questionIds[(p.i + writes) % questionIds.length]}/answers`,
        body: () => ({ body: `Answer ${writes} from bench person ${p.i}: the control region constrains it.` }),
      };
      const rename: Step = { kind: 'write', name: 'PATCH group', method: 'PATCH', path: () => `${A}/groups/${p.group}`, body: () => ({ name: `team ${p.i} (${writes})` }) };
      const raise: Step = {
        kind: 'write',
        name: 'POST question',
        method: 'POST',
        path: () => `${A}/questions`,
        body: () => ({ entry: keys[(p.i + writes) % keys.length], title: `Question ${writes} from bench person ${p.i}`, body: 'Where does its constraint come from?' }),
      };
      const writeSteps: Step[] = { convener: [answer, raise], analyst: [entryEdit, rename, answer], contact: [entryEdit, answer], reader: [] }[p.role];
      const read = (name: string, path: () => string): Step => ({ kind: 'read', name, method: 'GET', path });
      const steps: (() => Step)[] = [
        () => read('GET register', () => `${A}/entries`),
        () => read('GET entry', () => `${A}/entries/${other()}`),
        () => read('GET fit head', () => `${A}/fits/${quick.id}`),
        () => read('GET questions', () => `${A}/questions`),
        () => read('GET register', () => `${A}/entries`),
        () => read('GET model', () => `${A}/model`),
        () => (writeSteps.length ? writeSteps[writes++ % writeSteps.length] : read('GET entry', () => `${A}/entries/${p.entry}`)),
      ];
      return { list: steps, next: () => steps[at++ % steps.length]() };
    };
    const headersOf = (p: Person, step: Step): Record<string, string> =>
      step.method === 'GET'
        ? { cookie: p.session.cookie, 'accept-encoding': 'gzip, deflate, br' }
        : { cookie: p.session.cookie, 'content-type': 'application/json', 'x-csrf-token': p.session.csrf };

    // A full-impacts fit of the large model runs through the whole load: one more waits in the queue
    // behind the running one, so that the next starts the moment one ends. Fit states are sampled
    // one after another; a sample that finds no fit running (or gets no answer) fails the pace.
    type FitState = { id: number; state: string; progress: number; startedAt: string | null; finishedAt: string | null; failure: string | null };
    const fullFits: number[] = [];
    const queueFull = async () => fullFits.push((await admin.send('POST', `${A}/fits`, { version, label: 'full impacts', options: { dataset: 'observed', impacts: 'full' } })).id);
    const fullStates = async () => ((await admin.get(`${A}/fits`)) as FitState[]).filter((f) => fullFits.includes(f.id));
    await queueFull();
    await queueFull();
    while (!(await fullStates()).some((f) => f.state === 'running')) await new Promise((r) => setTimeout(r, 50));
    let measuring = false;
    let samples: string[] = [];
    let sampling = true;
    const sampler = (async () => {
      while (sampling) {
        try {
          const states = await fullStates();
          if (measuring) samples.push(states.some((f) => f.state === 'running') ? 'running' : 'none running');
          if (!states.some((f) => f.state === 'queued')) await queueFull();
        } catch (e) {
          if (measuring) samples.push(`no answer (${(e as Error).message})`);
        }
        await new Promise((r) => setTimeout(r, 1000));
      }
    })();
    const webPids = webProcesses(server.process.pid!, !!postgres && Number(args['web-processes']) > 1);
    const cpuNow = () => webPids.reduce((sum, pid) => sum + mainThreadCpuMs(pid), 0);

    /** Measures one pace over SECONDS; `during` runs the load and resolves when it has stopped. */
    const measure = async (pace: 'team' | 'saturation', m: Measure, start: () => Promise<() => Promise<void>>) => {
      const stop = await start();
      const loadBefore = os.loadavg()[0];
      const cpuBefore = cpuNow();
      const loadStart = Date.now();
      const loadStartMono = process.hrtime.bigint() / 1000n;
      samples = [];
      measuring = true;
      await new Promise((r) => setTimeout(r, SECONDS * 1000));
      measuring = false;
      const elapsed = (Date.now() - loadStart) / 1000;
      const cpuUsed = cpuNow() - cpuBefore;
      if (process.env.SERVER_NODE_ARGS) console.log(`load window (monotonic µs): ${loadStartMono} to ${process.hrtime.bigint() / 1000n}`);
      await stop();
      const title =
        pace === 'team'
          ? `team pace: ${PEOPLE} signed-in people, each sending a request and then thinking for 1–3 s, for ${SECONDS} s (register: ${keys.length} entries; ${where})`
          : `saturation: ${PEOPLE} signed-in people sending back to back for ${SECONDS} s (register: ${keys.length} entries; ${where})`;
      m.print(title, elapsed, cpuUsed, loadBefore);
      const running = samples.filter((x) => x === 'running').length;
      const notRunning = [...new Set(samples.filter((x) => x !== 'running'))];
      console.log(`full-impacts fits during the load: one running in ${running} of ${samples.length} samples${notRunning.length ? `; the others: ${notRunning.join(', ')}` : ''}`);
      const fitRan = samples.length > 0 && running === samples.length;
      if (!fitRan) console.log('a full-impacts fit did not run through the whole load: these figures do not measure the target');
      const p99 = percentile(m.all, 99);
      if (pace === 'team') {
        const met = fitRan && m.connectionErrors === 0 && m.timeouts === 0 && m.non2xx === 0 && p99 < TARGET_P99_MS;
        console.log(`team target: no errors or timeouts, no non-2xx, p99 under ${TARGET_P99_MS} ms, while a full-impacts fit runs -> ${met ? 'met' : 'NOT met'}`);
      } else console.log(`saturation throughput: ${Math.round(m.all.length / elapsed)} requests/s, with ${m.connectionErrors + m.timeouts + m.non2xx} errors`);
    };

    /** Team pace: every person sends, waits for the answer, thinks for 1–3 s, and sends again. */
    const team = async () => {
      const m = new Measure();
      await measure('team', m, async () => {
        let going = true;
        const loops = people.map(async (p) => {
          const steps = stepsOf(p);
          // the people start spread over the first three seconds
          await new Promise((r) => setTimeout(r, Math.random() * 3000));
          while (going) {
            const step = steps.next();
            const t = performance.now();
            try {
              const res = await fetch(server.url + step.path(), { method: step.method, headers: headersOf(p, step), body: step.method === 'GET' ? undefined : JSON.stringify(step.body?.() ?? {}), signal: AbortSignal.timeout(10_000) });
              const body = await res.text();
              if (measuring) m.response(step, res.status, performance.now() - t, body);
              if (res.ok) step.onOk?.(body);
            } catch (e) {
              if (measuring) m.noAnswer(step, (e as Error).name === 'TimeoutError');
            }
            await new Promise((r) => setTimeout(r, 1000 + 2000 * Math.random()));
          }
        });
        return async () => {
          going = false;
          await Promise.all(loops);
        };
      });
    };

    /**
     * Saturation: every person an autocannon instance with one connection. The people connect and
     * sign in gently first (one cheap request a second each), so that all connections are open before
     * the load: a saturated server takes in a new connection only once per turn of its event loop,
     * and a person still waiting to connect would only measure that. Then every person goes at full speed.
     */
    const saturation = async () => {
      const m = new Measure();
      await measure('saturation', m, async () => {
        let phase = 'connecting' as 'connecting' | 'load';
        const connected = new Map<number, { rate: number }>();
        const WARM: Step = { kind: 'read', name: 'warm-up', method: 'GET', path: () => '/api/auth/me' };
        let warmFailures = 0;
        const runs = people.map((p) => {
          let instance!: autocannon.Instance;
          const steps = stepsOf(p);
          const done = new Promise<autocannon.Result>((resolve, reject) => {
            let current: Step | null = null;
            let previous: Step | null = null;
            instance = autocannon(
              {
                url: server.url,
                connections: 1,
                // ended by stop() once the measured seconds are over
                duration: SECONDS + CONNECT_LIMIT_S + 30,
                connectionRate: 1,
                timeout: 10,
                requests: steps.list.map(() => ({
                  setupRequest: (req: autocannon.Request) => {
                    previous = current;
                    const step = (current = phase === 'connecting' ? WARM : steps.next());
                    return { ...req, method: step.method, path: step.path(), headers: headersOf(p, step), ...(step.method === 'GET' ? {} : { body: JSON.stringify(step.body?.() ?? {}) }) };
                  },
                  onResponse: (status: number, body: string) => {
                    if (status >= 200 && status < 300) current!.onOk?.(body);
                    else if (measuring && current !== WARM && m.failures.length < 10) m.failures.push(`${current!.method} ${current!.name} -> ${status} ${body.slice(0, 200)}`);
                  },
                })),
              },
              (err, result) => (err ? reject(err) : resolve(result)),
            );
            instance.on('response', (client, status, _bytes, responseTime) => {
              if (current === WARM) {
                if (status >= 200 && status < 300) connected.set(p.i, client as unknown as { rate: number });
                else warmFailures++;
                return;
              }
              if (measuring) m.response(current!, status, responseTime);
            });
            // a timeout or a connection error: no response, counted against the step that was waiting
            // (autocannon reconnects and sets up the next request before it reports a timeout, and after
            // it reports a connection error)
            instance.on('reqError', (err: Error) => {
              const timedOut = err?.message === 'request timed out';
              const step = timedOut ? previous : current;
              if (measuring && step && step !== WARM) m.noAnswer(step, timedOut);
            });
          });
          return { instance, done };
        });
        const t = Date.now();
        while (connected.size < PEOPLE && Date.now() - t < CONNECT_LIMIT_S * 1000) await new Promise((r) => setTimeout(r, 100));
        if (connected.size < PEOPLE || warmFailures) throw new Error(`only ${connected.size} of ${PEOPLE} people connected and signed in within ${CONNECT_LIMIT_S} s (${warmFailures} refused)`);
        console.log(`\n${PEOPLE} connections open, one per person, in ${seconds(Date.now() - t)}`);
        // full speed: a person waiting for its next second of the gentle pace goes on within a second
        phase = 'load';
        for (const client of connected.values()) client.rate = 1e9;
        await new Promise((r) => setTimeout(r, 1000));
        return async () => {
          for (const r of runs) r.instance.stop();
          await Promise.all(runs.map((r) => r.done));
        };
      });
    };

    for (const pace of PACES) await (pace === 'team' ? team() : saturation());
    sampling = false;
    await sampler;
    // the fits that started during the load run to their end; those still waiting are cancelled
    const atEnd = await fullStates();
    for (const f of atEnd.filter((x) => x.state === 'queued')) await admin.send('POST', `${A}/fits/${f.id}/cancel`);
    for (const f of atEnd.filter((x) => x.state === 'running')) await waitFor(f.id);
    const ran = (await fullStates()).filter((f) => f.startedAt !== null).sort((x, y) => x.id - y.id);
    console.log('');
    for (const f of ran) {
      const took = f.finishedAt ? seconds(new Date(f.finishedAt).getTime() - new Date(f.startedAt!).getTime()) : 'no end';
      console.log(`full-impacts fit ${f.id}: ${f.state} in ${took}${f.failure ? `: ${f.failure}` : ''}`);
    }
    if (!ran.every((f) => f.state === 'succeeded')) console.log('a full-impacts fit did not succeed: the figures above do not measure the target');
  } catch (e) {
    console.error(`the server's last output:\n${server.output().slice(-4000)}`);
    throw e;
  } finally {
    await Promise.all(workers.map((w) => new Promise((r) => (w.once('exit', r), w.kill('SIGTERM')))));
    await server.stop();
    postgres?.stop();
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
