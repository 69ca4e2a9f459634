import autocannon from 'autocannon';
import { syntheticModel } from '../server/fit';
import { startServer } from '../tests/e2e/support';
import { Session } from './bench-session';

/**
 * npm run bench:api — 50 concurrent readers on loopback against the register and a fit result
 * while a full-impacts fit of the large benchmark model runs on the same server. Prints
 * throughput, latency percentiles (from every response) and errors. Bounded: 20 s of load.
 */
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 50);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 20);
/** BENCH_ONLY=register or fit: load one endpoint alone */
const ONLY = process.env.BENCH_ONLY ?? 'both';

const percentile = (sorted: number[], p: number) => sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];

async function main() {
  const server = await startServer({ UPLOAD_LIMIT_BYTES: String(200_000_000), SIGN_IN_LIMIT: '1000' });
  try {
    const s = new Session(server.url);
    await s.send('POST', '/api/auth/sign-in', { email: 'admin@lantern.example', password: 'lantern-demo-2026' });
    await s.send('POST', '/api/analyses', { slug: 'bench-large', name: 'Benchmark: large model', blinded: false });
    await s.send('POST', '/api/analyses/bench-large/members', { email: 'admin@lantern.example', role: 'analyst' });
    const model = JSON.stringify({ ...syntheticModel('large'), name: 'bench-large' });
    const form = new FormData();
    form.append('file', new Blob([model], { type: 'application/json' }), 'large.json');
    const t0 = Date.now();
    const imported = await s.fetch('/api/analyses/bench-large/exchange', { method: 'POST', headers: { 'x-csrf-token': await s.token() }, body: form });
    if (imported.status !== 201) throw new Error(`import: ${imported.status} ${await imported.text()}`);
    console.log(`imported the large model (${(model.length / 1e6).toFixed(1)} MB) in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
    const version = (await s.send('POST', '/api/analyses/bench-large/versions', { note: 'benchmark' })).number;

    const waitFor = async (id: number) => {
      for (;;) {
        const fit = await (await s.fetch(`/api/analyses/bench-large/fits/${id}`)).json();
        if (!['queued', 'running'].includes(fit.state)) return fit;
        await new Promise((r) => setTimeout(r, 200));
      }
    };
    const first = await s.send('POST', '/api/analyses/bench-large/fits', { version, label: 'quick', options: { dataset: 'observed', impacts: 'quick' } });
    const done = await waitFor(first.id);
    const resultBytes = (await (await s.fetch(`/api/analyses/bench-large/fits/${first.id}`)).text()).length;
    console.log(`a quick fit to read: ${done.state}; its result is ${(resultBytes / 1e6).toFixed(2)} MB of JSON`);

    // BENCH_FIT=none: the same load without the fit, to tell what the fit costs the readers
    const full = process.env.BENCH_FIT === 'none' ? first : await s.send('POST', '/api/analyses/bench-large/fits', { version, label: 'full impacts', options: { dataset: 'observed', impacts: 'full' } });
    const fullStart = Date.now();
    const times: number[] = [];
    let instance!: autocannon.Instance;
    const finished = new Promise<autocannon.Result>((resolve, reject) => {
      instance = autocannon(
        {
          url: server.url,
          connections: CONNECTIONS,
          duration: SECONDS,
          // as a browser does
          headers: { cookie: s.cookie, 'accept-encoding': 'gzip, deflate, br' },
          requests: [
            ...(ONLY !== 'fit' ? [{ method: 'GET' as const, path: '/api/analyses/bench-large/entries' }] : []),
            ...(ONLY !== 'register' ? [{ method: 'GET' as const, path: `/api/analyses/bench-large/fits/${first.id}` }] : []),
          ],
        },
        (err, result) => (err ? reject(err) : resolve(result)),
      );
    });
    instance.on('response', (_client, _status, _bytes, responseTime) => times.push(responseTime));
    const result = await finished;
    const state = (await (await s.fetch(`/api/analyses/bench-large/fits/${full.id}`)).json()) as { state: string; progress: number };
    times.sort((a, b) => a - b);
    console.log(`\nload: ${CONNECTIONS} connections for ${SECONDS} s (register: 250 entries; fit result: ${(resultBytes / 1e6).toFixed(2)} MB)`);
    console.table({
      requests: result.requests.total,
      'requests/s': Math.round(result.requests.average),
      'p50 ms': percentile(times, 50),
      'p95 ms': percentile(times, 95),
      'p99 ms': percentile(times, 99),
      'max ms': times[times.length - 1],
      errors: result.errors,
      timeouts: result.timeouts,
      'non-2xx': result.non2xx,
    });
    console.log(`the full-impacts fit during the load: ${state.state} at ${(state.progress * 100).toFixed(0)} % after ${((Date.now() - fullStart) / 1000).toFixed(1)} s`);
    const ended = await waitFor(full.id);
    console.log(`the full-impacts fit ended ${ended.state} after ${((Date.now() - fullStart) / 1000).toFixed(1)} s${ended.failure ? `: ${ended.failure}` : ''}`);
    // the figures only count if the fit really ran through the load
    const fitRan = process.env.BENCH_FIT === 'none' || (state.state === 'running' && ended.state === 'succeeded');
    if (!fitRan) console.log('the fit did not run through the load: these figures do not measure the target');
    console.log(`targets: p95 under 100 ms and no errors -> ${fitRan && percentile(times, 95) < 100 && result.errors === 0 && result.non2xx === 0 ? 'met' : 'NOT met'}`);
  } finally {
    await server.stop();
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
