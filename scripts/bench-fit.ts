/**
 * Fit-engine benchmark: deterministic synthetic models (server/fit/synthetic.ts, seed 1) of four
 * sizes; per size the fit time and Newton iterations, the full-impacts wall time (every nuisance
 * parameter, post-fit, both directions, on the worker pool), the μ scan time and peak memory.
 * Targets on a 2-core machine: large fit < 0.5 s, large full impacts < 5 s, peak RSS < 500 MB.
 *
 *   npm run bench:fit [-- --sizes tiny,small --threads 2]
 */
import { parseArgs } from 'node:util';
import { createFitPool, fitModel, syntheticModel, type SyntheticSize } from '../server/fit';
import { curvatureAt } from '../server/fit/covariance';
import { createScratch, minimise } from '../server/fit/minimiser';
import { buildProblem, startPoint } from '../server/fit/problem';
import { runJobs } from '../server/fit/pool';
import { scanJobs } from '../server/fit/scan';
import type { Job } from '../server/fit/jobs';

const { values } = parseArgs({ options: { sizes: { type: 'string', default: 'tiny,small,medium,large' }, threads: { type: 'string' } } });
const sizes = values.sizes!.split(',') as SyntheticSize[];
const pool = createFitPool(values.threads ? { threads: Number(values.threads) } : {});
let peakRss = process.memoryUsage().rss;
const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 20);
const seconds = (t: number) => ((performance.now() - t) / 1000).toFixed(3);

const rows: Record<string, string | number>[] = [];
for (const size of sizes) {
  const model = syntheticModel(size, 1);
  const base = { dataset: 'observed' as const, asimovMu: 1, controlOnly: false, excludeRegions: [] };
  const problem = buildProblem(model, base);
  const m = problem.model;

  // The fit alone: Newton from the start values plus the covariance at the minimum (twice: the
  // first run includes the JIT warming up; the second is what a server in steady state sees).
  let fitTime = '';
  let coldTime = '';
  let iterations = 0;
  let context = null;
  for (let rep = 0; rep < 2; rep++) {
    const t = performance.now();
    const scratch = createScratch(problem);
    const s0 = startPoint(m);
    const r = minimise(problem, s0.phi, s0.gamma, scratch);
    const c = curvatureAt(problem, r.phi, r.gamma, scratch);
    if (rep === 0) coldTime = seconds(t);
    else fitTime = seconds(t);
    iterations = r.iterations;
    if (!c.ok) throw new Error(`${size}: ${c.message}`);
    context = c.context;
  }
  const ctx = context!;

  // Full impacts, post-fit, both directions, on the pool.
  const jobs: Job[] = [];
  for (let i = m.thetaStart; i < m.nDense; i++) {
    if (problem.held[i]) continue;
    const sigma = Math.sqrt(ctx.V[i * m.nDense + i]);
    for (const sgn of [1, -1]) jobs.push({ kind: 'fix', context: 0, index: i, value: Math.min(5, Math.max(-5, ctx.phi[i] + sgn * sigma)) });
  }
  let t = performance.now();
  const impacts = await runJobs([ctx], jobs, { pool });
  const impactTime = jobs.length ? seconds(t) : '-';
  const failedImpacts = impacts.filter((r) => !r.ok).length;

  // μ scan: 21 points and the four crossings, on the pool.
  t = performance.now();
  const scan = scanJobs(ctx, 0, 0, 21);
  await runJobs([ctx], scan.jobs, { pool });
  const scanTime = seconds(t);

  // Everything the API computes by default plus full impacts, scan and limit, end to end.
  t = performance.now();
  const full = await fitModel(model, { impacts: 'full', scan: true, limit: true }, { pool });
  const endToEnd = seconds(t);

  peakRss = Math.max(peakRss, process.memoryUsage().rss);
  rows.push({
    size,
    bins: m.nBins,
    parameters: `${m.nDense}+${m.nGamma}γ`,
    'fit s': fitTime,
    'fit cold s': coldTime,
    iterations,
    refits: jobs.length,
    'impacts s': impactTime,
    'failed refits': failedImpacts,
    'scan s': scanTime,
    'all outputs s': endToEnd,
    status: full.status,
    'peak RSS MB': (peakRss / 2 ** 20).toFixed(0),
  });
  console.log(rows.at(-1));
}
clearInterval(sampler);
await pool.destroy();
console.table(rows);
console.log(`threads: ${pool.threads}; peak RSS of this process: ${(peakRss / 2 ** 20).toFixed(0)} MB (worker threads share it)`);
