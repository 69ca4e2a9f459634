import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { syntheticModel } from '../server/fit';
import { startServer } from '../tests/e2e/support';
import { Session } from './bench-session';

/**
 * The review work on the large benchmark model, through a running server as a person meets it
 * (import, a fit with full post-fit impacts, then):
 * - "what an upload does": from saving a variation of one systematic to the refitted μ̂, σ_μ, its
 *   post-fit impact and rank on the entry (target ≤ 5 s on 2 threads);
 * - the pruning preview of the effects the rules propose: from asking to the numbers (no target);
 * - the review programme on the version: from starting the set to every member done (≤ 30 s).
 * Run by `npm run bench:fit` after the engine's figures, or alone: `npm run bench:review`.
 * --repeat N repeats the upload check and the preview (medians printed); --threads sets FIT_THREADS.
 */

const signed = (x: number | null | undefined) => (x == null ? '–' : `${x >= 0 ? '+' : ''}${x.toFixed(4)}`);
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const seconds = (ms: number) => `${(ms / 1000).toFixed(2)} s`;
const verdict = (what: string, ms: number, targetS: number | null) =>
  console.log(`${what}: ${seconds(ms)}${targetS === null ? '' : ` (target ≤ ${targetS} s: ${ms / 1000 <= targetS ? 'met' : 'NOT met'})`}`);

async function until<T>(read: () => Promise<T>, done: (x: T) => boolean, what: string, limitS = 600): Promise<T> {
  const started = Date.now();
  for (;;) {
    const x = await read();
    if (done(x)) return x;
    if (Date.now() - started > limitS * 1000) throw new Error(`${what} did not finish in ${limitS} s`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const loadAverage = () => {
  try {
    return readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
  } catch {
    return 'n/a';
  }
};

export async function benchReview(options: { threads: number; repeat: number }) {
  const server = await startServer({ UPLOAD_LIMIT_BYTES: String(200_000_000), SIGN_IN_ATTEMPT_LIMIT: '100000', FIT_THREADS: String(options.threads) });
  try {
    const s = new Session(server.url);
    await s.send('POST', '/api/auth/sign-in', { email: 'admin@lantern.example', password: 'lantern-demo-2026' });
    const A = '/api/analyses/bench-review';
    await s.send('POST', '/api/analyses', { slug: 'bench-review', name: 'Benchmark: large model', blinded: false });
    await s.send('POST', `${A}/members`, { email: 'admin@lantern.example', role: 'analyst' });
    const model = syntheticModel('large');
    await s.upload(`${A}/exchange`, 'large.json', JSON.stringify({ ...model, name: 'bench-review' }));
    const version = (await s.send('POST', `${A}/versions`, { note: 'benchmark' })).number as number;
    const effects = model.systematics.reduce((n, x) => n + x.effects.length, 0);
    console.log(`\nreview work on the large model (${model.regions.length} regions, ${model.systematics.length} systematics, ${effects} effects), ${options.threads} fit threads`);

    const fit = await s.send('POST', `${A}/fits`, { version, label: 'reference', options: { dataset: 'observed', impacts: 'full' } });
    const fitted = await until(() => s.get(`${A}/fits/${fit.id}`), (f) => !['queued', 'running'].includes(f.state), 'the reference fit');
    if (fitted.state !== 'succeeded') throw new Error(`the reference fit ${fitted.state}: ${fitted.failure}`);

    // a systematic with shape effects: its shape in one template tilted a little more each time
    const systematic = model.systematics.find((x) => x.effects.some((e) => e.kind === 'shape'))!;
    const effect = systematic.effects.find((e) => e.kind === 'shape')! as { region: string; process: string; up: number[]; down: number[] };
    const nominal = model.templates.find((x) => x.region === effect.region && x.process === effect.process)!.nominal;
    const uploadTimes: number[] = [];
    for (let i = 0; i < options.repeat; i++) {
      const tilt = 0.01 * (i + 1);
      const rows = nominal.map((_, b) => {
        const w = b / Math.max(1, nominal.length - 1) - 0.5;
        return `${effect.region},${effect.process},shape,${b + 1},${effect.up[b] * (1 + tilt * w)},${effect.down[b] * (1 - tilt * w)}`;
      });
      const started = Date.now();
      await s.upload(`${A}/entries/${systematic.key}/variations?save=1`, 'tilted.csv', ['region,process,kind,bin,up,down', ...rows].join('\n') + '\n');
      const entry = await until(() => s.get(`${A}/entries/${systematic.key}`), (e) => e.impactCheck && e.impactCheck.state !== 'running', 'the upload check');
      uploadTimes.push(Date.now() - started);
      if (entry.impactCheck.state !== 'done') throw new Error(`the upload check ${entry.impactCheck.state}: ${entry.impactCheck.failure}`);
      const f = entry.impactCheck.focus[0];
      if (i === 0)
        console.log(
          `  ${systematic.key}: μ̂ ${entry.impactCheck.mu.before.toFixed(4)} → ${entry.impactCheck.mu.after.toFixed(4)}, σ_μ ${entry.impactCheck.muError.before.toFixed(4)} → ${entry.impactCheck.muError.after.toFixed(4)}, impact ${signed(f.impact.up)} / ${signed(f.impact.down)}, rank ${f.rankBefore} → ${f.rankAfter}, ${entry.impactCheck.moved.length} parameters moved; the refit itself ${entry.impactCheck.seconds.toFixed(2)} s`,
        );
    }
    verdict(`what an upload does (save to numbers, median of ${options.repeat})`, median(uploadTimes), 5);

    const overview = await s.get(`${A}/pruning`);
    const chosen = overview.candidates.slice(0, 200).map((c: { effectId: number }) => ({ id: c.effectId }));
    if (chosen.length) {
      const previewTimes: number[] = [];
      for (let i = 0; i < options.repeat; i++) {
        const started = Date.now();
        const p = await s.send('POST', `${A}/pruning/previews`, { effects: chosen });
        const done = await until(() => s.get(`${A}/pruning/previews/${p.id}`), (x) => x.state !== 'running', 'the pruning preview');
        previewTimes.push(Date.now() - started);
        if (done.state !== 'done') throw new Error(`the pruning preview ${done.state}: ${done.failure}`);
      }
      verdict(`pruning preview of ${chosen.length} of ${overview.candidates.length} candidates (median of ${options.repeat})`, median(previewTimes), null);
    } else console.log('pruning preview: the rules propose no effect of the large model');

    console.log(`  load average before the review programme: ${loadAverage()}`);
    const started = Date.now();
    const set = await s.send('POST', `${A}/review-sets`, { version });
    const finished = await until(() => s.get(`${A}/review-sets/${set.id}`), (x) => x.state !== 'running', 'the review set', 1200);
    verdict(`review programme, ${finished.members.length} fits (${finished.state})`, Date.now() - started, 30);
    for (const m of finished.members as { id: number; variant: string }[]) {
      const f = await s.get(`${A}/fits/${m.id}`);
      const seconds = f.startedAt && f.finishedAt ? (Date.parse(f.finishedAt) - Date.parse(f.startedAt)) / 1000 : NaN;
      console.log(`  ${m.variant.padEnd(28)} ${seconds.toFixed(2).padStart(7)} s`);
    }
  } finally {
    await server.stop();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  let values: { threads: string; repeat: string };
  try {
    values = parseArgs({ options: { threads: { type: 'string', default: '2' }, repeat: { type: 'string', default: '3' } }, strict: true }).values as typeof values;
  } catch (e) {
    console.error(`${(e as Error).message}. Usage: npm run bench:review -- [--threads N] [--repeat N]`);
    process.exit(2);
  }
  benchReview({ threads: Number(values.threads), repeat: Number(values.repeat) }).catch((e) => {
    console.error(e instanceof Error ? e.message : e);
    process.exit(1);
  });
}
