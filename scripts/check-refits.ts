/**
 * The refit-agreement suite in full (server/fit/refit-agreement.ts): every impact (pre- and
 * post-fit, both directions), both crossings of both μ intervals and q0 of generated models,
 * each against a cold fit at the same fixed value, at the tolerances of docs/likelihood.md §8. The engine's refits
 * run on a 2-thread pool, the reference cold fits on 2 more worker threads. Prints one row per
 * model (outputs compared, out of tolerance, empty, the engine's refits per rung) and the
 * outputs that disagree. Exit code 1 when any output is out of tolerance or empty.
 *
 *   npm run check:refits [-- --only "stress small" --details 20]
 *   npm run check:refits -- --seeds 29-40    (the tiny and small families at seeds the full set leaves out)
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { createFitPool, threadEntry, workerPool } from '../server/runs/threads/pool';
import { AGREEMENT_FULL, agreementAtSeeds, checkRefitAgreement, type AgreementRow } from '../server/fit/refit-agreement';
import type { ColdFit, ColdFitTask } from '../server/fit/refit-reference';

let values: { only?: string; details: string; seeds?: string };
try {
  values = parseArgs({ options: { only: { type: 'string' }, details: { type: 'string', default: '10' }, seeds: { type: 'string' } } }).values as typeof values;
} catch (e) {
  console.error(`check:refits: ${(e as Error).message}`);
  process.exit(2);
}
const seedRange = values.seeds?.match(/^(\d+)-(\d+)$/);
if (values.seeds !== undefined && (!seedRange || Number(seedRange[1]) > Number(seedRange[2]))) {
  console.error(`check:refits: --seeds takes a range of seeds such as 9-16, not "${values.seeds}"`);
  process.exit(2);
}
const loadAverage = () => {
  try {
    return readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
  } catch {
    return 'n/a';
  }
};
console.log(`load average before: ${loadAverage()}`);
const pool = createFitPool({ threads: 2 });
const referenceFile = threadEntry('refit-reference.worker');
const reference = workerPool(referenceFile, { minThreads: 2, maxThreads: 2 });
const cases = (seedRange ? agreementAtSeeds(Number(seedRange[1]), Number(seedRange[2])) : AGREEMENT_FULL).filter((c) => !values.only || c.label.includes(values.only));
const rows: AgreementRow[] = [];
const started = performance.now();
try {
  for (const c of cases) {
    const row = await checkRefitAgreement(c.label, c.build(), { pool, reference: (task: ColdFitTask) => reference.run(task) as Promise<ColdFit[]> });
    rows.push(row);
    const r = row.rungs;
    console.log(
      `${row.model}: ${row.status}, ${row.compared} compared, ${row.outOfTolerance} out of tolerance, ${row.empty} empty; refits warm ${r.warm}, Newton ${r.newton}, cold ${r.cold}, failed ${r.failed}; ` +
        `engine ${row.seconds.engine.toFixed(1)} s, reference ${row.seconds.reference.toFixed(1)} s`,
    );
    for (const d of row.details.slice(0, Number(values.details))) {
      console.log(`    ${d.what}: engine ${d.engine === null ? 'empty' : d.engine.toPrecision(6)}, cold fit ${d.reference.toPrecision(6)} (allowed ±${d.tolerance.toExponential(1)})`);
    }
  }
} finally {
  await pool.destroy();
  await reference.destroy();
}

const sum = (f: (r: AgreementRow) => number) => rows.reduce((a, r) => a + f(r), 0);
console.table(
  rows.map((r) => ({
    model: r.model,
    status: r.status,
    compared: r.compared,
    'out of tolerance': r.outOfTolerance,
    empty: r.empty,
    'refits warm': r.rungs.warm,
    'refits Newton': r.rungs.newton,
    'refits cold': r.rungs.cold,
    'refits failed': r.rungs.failed,
    'reference: two minima': r.severalMinima,
    "reference took engine's minimum": r.engineLower,
    'reference failed': r.referenceFailed,
  })),
);
const total = {
  models: rows.length,
  refits: sum((r) => r.rungs.warm + r.rungs.newton + r.rungs.cold + r.rungs.failed),
  compared: sum((r) => r.compared),
  outOfTolerance: sum((r) => r.outOfTolerance),
  empty: sum((r) => r.empty),
  warm: sum((r) => r.rungs.warm),
  newton: sum((r) => r.rungs.newton),
  cold: sum((r) => r.rungs.cold),
  failed: sum((r) => r.rungs.failed),
  notConverged: rows.filter((r) => r.status !== 'converged').length,
};
console.log(
  `${total.models} models, ${total.refits} refits (warm ${total.warm}, Newton ${total.newton}, cold ${total.cold}, failed ${total.failed}), ` +
    `${total.compared} outputs compared: ${total.outOfTolerance} out of tolerance, ${total.empty} empty; ${total.notConverged} fits not converged; ` +
    `${((performance.now() - started) / 1000).toFixed(0)} s; load average after: ${loadAverage()}`,
);
process.exitCode = total.outOfTolerance > 0 || total.empty > 0 || total.notConverged > 0 ? 1 : 0;
