/**
 * Fit-engine benchmark: deterministic synthetic models (server/fit/synthetic.ts, seed 1) of four
 * sizes; per size the fit time and Newton iterations, the full-impacts wall time (every nuisance
 * parameter, post-fit, both directions, on the worker pool) with the mean work per refit, the μ
 * scan time, every output end to end (with the time per stage) and peak memory. With --repeat N
 * the fit, impacts, scan and every output are timed N times: best and median are printed. The
 * load average is printed before and after each size, since the machine may be shared. Refits are
 * counted per rung of the ladder (warm / Newton / cold / failed).
 * Targets on a 2-core machine, medians: large fit ≤ 0.2 s, large full post-fit impacts ≤ 2 s,
 * large every output ≤ 5 s; peak RSS < 500 MB. With the medium size, one more row: a scan over 30
 * signal hypotheses of the medium model (synthetic.ts, `hypotheses: 30`) with limits, on the pool
 * (target ≤ 20 s on 2 threads), with its points and failures; and a row for the 2D contour of two
 * parameters of interest of the medium model (synthetic.ts, `secondPoi`; 21 × 21 points, in this
 * thread), target ≤ 10 s, with its failed points.
 *
 *   npm run bench:fit [-- --sizes tiny,small --threads 2 --repeat 3]
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { fitModel, profileContour, scanHypotheses, syntheticModel, type SyntheticSize } from '../server/fit';
import { createFitPool } from '../server/runs/threads/pool';
import { benchReview } from './bench-review';
import { curvatureAt } from '../server/fit/covariance';
import { createScratch, minimise } from '../server/fit/minimiser';
import { buildProblem, startPoint } from '../server/fit/problem';
import { runRefits } from '../server/fit/refit-batches';
import { scanTasks } from '../server/fit/scan';
import type { RefitTask } from '../server/fit/refit-tasks';

let values: { sizes?: string; threads?: string; repeat?: string; 'skip-review'?: boolean };
try {
  values = parseArgs({ options: { sizes: { type: 'string', default: 'tiny,small,medium,large' }, threads: { type: 'string' }, repeat: { type: 'string', default: '1' }, 'skip-review': { type: 'boolean', default: false } } }).values;
} catch (e) {
  console.error(`${(e as Error).message}. Usage: npm run bench:fit -- [--sizes tiny,small,medium,large] [--threads N] [--repeat N] [--skip-review]`);
  process.exit(2);
}
const sizes = values.sizes!.split(',') as SyntheticSize[];
const repeat = Math.max(1, Number(values.repeat));
const loadAverage = () => {
  try {
    return readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
  } catch {
    return 'n/a';
  }
};
console.log(`load average before: ${loadAverage()}`);
/** "best / median" of a list of seconds. */
const bestMedian = (xs: number[]) => {
  const sorted = [...xs].sort((a, b) => a - b);
  const median = sorted[Math.floor((sorted.length - 1) / 2)];
  return xs.length === 1 ? sorted[0].toFixed(3) : `${sorted[0].toFixed(3)} / ${median.toFixed(3)}`;
};
const pool = createFitPool(values.threads ? { threads: Number(values.threads) } : {});
let peakRss = process.memoryUsage().rss;
const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 20);
const elapsed = (t: number) => (performance.now() - t) / 1000;

const rows: Record<string, string | number>[] = [];
for (const size of sizes) {
  const model = syntheticModel(size, 1);
  const base = { dataset: 'observed' as const, asimovMu: 1, controlOnly: false, excludeRegions: [] };
  const problem = buildProblem(model, base);
  const m = problem.model;

  // The fit alone: Newton from the start values plus the covariance at the minimum (the first
  // run includes the JIT warming up; the others are what a server in steady state sees).
  const fitTimes: number[] = [];
  let coldTime = 0;
  let iterations = 0;
  let context = null;
  for (let rep = 0; rep <= repeat; rep++) {
    const t = performance.now();
    const scratch = createScratch(problem);
    const s0 = startPoint(m);
    const r = minimise(problem, s0.phi, s0.gamma, scratch);
    const c = curvatureAt(problem, r.phi, r.gamma, scratch);
    if (rep === 0) coldTime = elapsed(t);
    else fitTimes.push(elapsed(t));
    iterations = r.iterations;
    if (!c.ok) throw new Error(`${size}: ${c.message}`);
    context = c.context;
  }
  const ctx = context!;

  // Full impacts, post-fit, both directions, on the pool.
  const tasks: RefitTask[] = [];
  for (let i = m.thetaStart; i < m.nDense; i++) {
    if (problem.held[i]) continue;
    const sigma = Math.sqrt(ctx.V[i * m.nDense + i]);
    for (const sgn of [1, -1]) tasks.push({ kind: 'fix', context: 0, index: i, value: Math.min(5, Math.max(-5, ctx.phi[i] + sgn * sigma)) });
  }
  const impactTimes: number[] = [];
  const scanTimes: number[] = [];
  let impacts: Awaited<ReturnType<typeof runRefits>> = [];
  for (let rep = 0; rep < repeat; rep++) {
    let t = performance.now();
    impacts = await runRefits([ctx], tasks, { pool });
    impactTimes.push(elapsed(t));
    // μ scan: 21 points and the four crossings, on the pool.
    t = performance.now();
    const scan = scanTasks(ctx, 0, 0, 21);
    await runRefits([ctx], scan.tasks, { pool });
    scanTimes.push(elapsed(t));
  }
  const mean = (f: (w: NonNullable<(typeof impacts)[number]['work']>) => number) =>
    impacts.length ? (impacts.reduce((acc, r) => acc + (r.work ? f(r.work) : 0), 0) / impacts.length).toFixed(2) : '-';

  // Every output: what the API computes by default plus full impacts (post- and pre-fit), the scan
  // with both intervals, q0, the CLs limit with its bands and the yields, end to end, timed
  // `repeat` times, with the time at which each stage first reported in the last run.
  const everyTimes: number[] = [];
  let reached: Record<string, number> = {};
  let full: Awaited<ReturnType<typeof fitModel>> | null = null;
  const loadBefore = loadAverage();
  for (let rep = 0; rep < repeat; rep++) {
    const t = performance.now();
    reached = {};
    full = await fitModel(model, { impacts: 'full', scan: true, limit: true }, { pool, onProgress: (_, stage) => (reached[stage] ??= elapsed(t)) });
    everyTimes.push(elapsed(t));
  }
  const stageText = Object.entries(reached)
    .map(([k, v]) => `${k} ${v.toFixed(2)}`)
    .join(', ');
  const rungs = full!.convergence.refits;
  const rungText = (r: { warm: number; newton: number; cold: number; failed: number } | undefined) => (r ? `${r.warm}/${r.newton}/${r.cold}/${r.failed}` : '-');
  const impactRungs = { warm: 0, newton: 0, cold: 0, failed: 0 };
  for (const r of impacts) {
    if (!r.work) continue;
    if (r.work.rung) impactRungs[r.work.rung]++;
    else impactRungs.failed++;
  }

  peakRss = Math.max(peakRss, process.memoryUsage().rss);
  rows.push({
    size,
    bins: m.nBins,
    parameters: `${m.nDense}+${m.nGamma}γ`,
    'fit s': bestMedian(fitTimes),
    'fit cold s': coldTime.toFixed(3),
    iterations,
    refits: tasks.length,
    'impacts s': tasks.length ? bestMedian(impactTimes) : '-',
    'impact rungs w/n/c/f': rungText(impactRungs),
    'steps/refit': mean((w) => w.steps + w.normalisationSteps),
    'gradients/refit': mean((w) => w.gradients),
    'scan s': bestMedian(scanTimes),
    'every output s': bestMedian(everyTimes),
    'every-output refits w/n/c/f': rungText(rungs),
    status: full!.status,
    'peak RSS MB': (peakRss / 2 ** 20).toFixed(0),
  });
  console.log(`${size}: every output, seconds at which each stage started (last run): ${stageText}; load average ${loadBefore} → ${loadAverage()}`);
  console.log(rows.at(-1));
  if (size === 'large') {
    const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor((xs.length - 1) / 2)];
    const verdict = (what: string, x: number, target: number) => console.log(`  ${what}: median ${x.toFixed(3)} s, target ≤ ${target} s: ${x <= target ? 'met' : `missed by ${(x - target).toFixed(2)} s`}`);
    verdict('large fit', median(fitTimes), 0.2);
    verdict('large full post-fit impacts', median(impactTimes), 2);
    verdict('large every output', median(everyTimes), 5);
  }
}
// A scan over signal hypotheses: each hypothesis's fit with q0, the expected significance and the CLs
// limit with its bands, two hypotheses in flight, their refits on the pool.
let scanRow: Record<string, string | number> | null = null;
if (sizes.includes('medium')) {
  const model = syntheticModel('medium', 1, { hypotheses: 30 });
  const times: number[] = [];
  let scan: Awaited<ReturnType<typeof scanHypotheses>> | null = null;
  const loadBefore = loadAverage();
  for (let rep = 0; rep < repeat; rep++) {
    const t = performance.now();
    scan = await scanHypotheses(model, { limit: true }, { pool });
    times.push(elapsed(t));
  }
  const median = [...times].sort((a, b) => a - b)[Math.floor((times.length - 1) / 2)];
  scanRow = {
    row: '30-hypothesis scan of the medium model with limits',
    's': bestMedian(times),
    points: scan!.points.length,
    failed: scan!.points.filter((p) => p.status === 'failed').length,
    target: `≤ 20 s: ${median <= 20 ? 'met' : `missed by ${(median - 20).toFixed(2)} s`}`,
  };
  console.log(`scan over signal hypotheses: load average ${loadBefore} → ${loadAverage()}`);
  console.log(scanRow);
}
// The 2D profile-likelihood contour of μ and a second parameter of interest: 441 fits with both held.
let contourRow: Record<string, string | number> | null = null;
if (sizes.includes('medium')) {
  const model = syntheticModel('medium', 1, { secondPoi: true });
  const times: number[] = [];
  let contour: ReturnType<typeof profileContour> | null = null;
  const loadBefore = loadAverage();
  for (let rep = 0; rep < repeat; rep++) {
    const t = performance.now();
    contour = profileContour(model, {}, 'mu', 'mu2');
    times.push(elapsed(t));
  }
  const median = [...times].sort((a, b) => a - b)[Math.floor((times.length - 1) / 2)];
  contourRow = {
    row: '2D contour of two parameters of interest, medium model',
    's': bestMedian(times),
    points: contour!.points.converged + contour!.points.failed,
    failed: contour!.points.failed,
    target: `≤ 10 s: ${median <= 10 ? 'met' : `missed by ${(median - 10).toFixed(2)} s`}`,
  };
  console.log(`2D contour: load average ${loadBefore} → ${loadAverage()}`);
  console.log(contourRow);
}
clearInterval(sampler);
await pool.destroy();
console.table(rows);
if (scanRow) console.table([scanRow]);
if (contourRow) console.table([contourRow]);
console.log(`load average after: ${loadAverage()}`);
console.log(`threads: ${pool.threads}; times are best / median of ${repeat} (one run: that run); peak RSS of this process: ${(peakRss / 2 ** 20).toFixed(0)} MB (worker threads share it)`);
// the review work on the large model through a running server (scripts/bench-review.ts)
if (sizes.includes('large') && !values['skip-review']) await benchReview({ threads: pool.threads, repeat });
