import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitResult } from '@shared/schemas/fit';
import { fitModel } from './fit';
import type { ConditionalPoint, RefitResult, RefitTask } from './refit-tasks';
import { noRefits, type RefitCounts } from './refit-tasks';
import type { FitPool } from './refit-batches';
import { buildProblem } from './problem';
import { compassSearch, REFERENCE_PROBLEM, runColdFits, type ColdFit, type ColdFitTask } from './refit-reference';
import { Q68, Q95 } from './scan';
import { syntheticModel } from './synthetic';
import { EDGE_SIZES, stressModel, type StressSize } from './synthetic-stress';

/**
 * The refit-agreement suite (docs/likelihood.md §10): on generated models, every impact
 * (post-fit θ̂ ± σ̂ and pre-fit θ̂ ± 1, both directions), both crossings of the 68 % and 95 %
 * intervals of μ and q0 from fitModel are compared with cold fits at the same fixed value
 * (refit-reference.ts: the lower of two cold fits, from the start values and from the reference's
 * own best fit), at the tolerances of docs/likelihood.md §8:
 *  - an impact Δμ = μ(θ fixed) − μ̂ to 2e-3 relative or 1e-5 absolute, the reference's own μ̂
 *    from a cold fit with nothing held;
 *  - a crossing x: the cold fit at x gives q_ref; since √q is close to linear in μ, x is off by
 *    δx ≈ (q_ref − level)·|x − μ̂|/(2·level), held to 2e-3 of |x − μ̂| or 1e-5;
 *  - q0 through Z = √q0, to 1e-3;
 *  - a minimum with a template on or past the clip edge: no lower NLL than 1e-7 below it found
 *    by compass search on the NLL itself (refit-reference.ts).
 * An output the engine left empty is counted as empty when the reference has it (for a
 * crossing: q above the level at μ's bound or at a point between μ̂ and the bound).
 */

export interface AgreementCase {
  label: string;
  build: () => ExchangeModel;
}

const seeds = (from: number, to: number) => Array.from({ length: to - from + 1 }, (_, k) => from + k);
const stress = (size: StressSize, seed: number): AgreementCase => ({ label: `stress ${size} seed ${seed}`, build: () => stressModel(size, seed) });
const edge = (size: 'tiny' | 'small', seed: number): AgreementCase => ({ label: `edge ${size} seed ${seed}`, build: () => stressModel(EDGE_SIZES[size], seed) });
const benchmark = (size: 'small' | 'medium' | 'large', seed: number): AgreementCase => ({ label: `benchmark ${size} seed ${seed}`, build: () => syntheticModel(size, seed) });

/** The seeded slice that runs in `npm test` (a few seconds). */
export const AGREEMENT_SLICE: AgreementCase[] = [
  ...seeds(1, 4).map((s) => stress('tiny', s)),
  stress('small', 1),
  stress('small', 4),
  ...[1, 2, 4, 5, 6, 10, 22, 27].map((s) => edge('tiny', s)),
  edge('small', 4),
  edge('small', 2),
  edge('small', 12),
];

/** The full set of `npm run check:refits`. */
export const AGREEMENT_FULL: AgreementCase[] = [
  ...seeds(1, 16).map((s) => stress('tiny', s)),
  ...seeds(1, 16).map((s) => stress('small', s)),
  ...seeds(1, 3).map((s) => stress('medium', s)),
  stress('large', 1),
  ...seeds(1, 28).map((s) => edge('tiny', s)),
  ...seeds(1, 28).map((s) => edge('small', s)),
  benchmark('small', 1),
  benchmark('medium', 1),
  benchmark('large', 1),
];

/**
 * The generated families (stress and edge, tiny and small) at other seeds: models the suite has
 * never been tuned on, for `npm run check:refits -- --seeds 29-40`.
 */
export const agreementAtSeeds = (from: number, to: number): AgreementCase[] => [
  ...seeds(from, to).map((s) => stress('tiny', s)),
  ...seeds(from, to).map((s) => stress('small', s)),
  ...seeds(from, to).map((s) => edge('tiny', s)),
  ...seeds(from, to).map((s) => edge('small', s)),
];

export interface Disagreement {
  what: string;
  engine: number | null;
  reference: number;
  /** |engine − reference| allowed. */
  tolerance: number;
}

export interface AgreementRow {
  model: string;
  status: FitResult['status'];
  /** Outputs compared (impacts, crossings, q0). */
  compared: number;
  outOfTolerance: number;
  empty: number;
  /** Refits of the engine by rung (its convergence report). */
  rungs: RefitCounts;
  /** Reference cold fits that did not converge (their outputs are not compared). */
  referenceFailed: number;
  /** Compared outputs where the reference's two cold fits reached different minima (it keeps the lower). */
  severalMinima: number;
  /** Compared outputs where Newton from the engine's conditional minimum went lower than every start of the reference's own. */
  engineLower: number;
  details: Disagreement[];
  seconds: { engine: number; reference: number };
}

export interface AgreementControl {
  /** Pool for the engine's refits. */
  pool?: FitPool;
  /** Runs reference cold fits elsewhere (worker threads); serial in this thread by default. */
  reference?: (task: ColdFitTask) => Promise<ColdFit[]>;
  /** Alters the engine's result before it is compared: for tests that the suite catches a wrong output. */
  adjust?: (result: FitResult) => void;
}

let modelCount = 0;

export async function checkRefitAgreement(label: string, model: ExchangeModel, control: AgreementControl = {}): Promise<AgreementRow> {
  let t = performance.now();
  // The engine's conditional minima, by what they are for: the reference re-minimises from each
  // as one more start (refit-reference.ts).
  const points = new Map<string, ConditionalPoint>();
  const inspect = (tasks: RefitTask[], results: RefitResult[]) =>
    tasks.forEach((task, k) => {
      const r = results[k];
      if (task.context !== 0) return;
      if (task.kind === 'fix') {
        if (r.point) points.set(`fix ${task.index} ${task.value}`, r.point);
        if (task.next !== undefined && r.next?.point) points.set(`fix ${task.index} ${task.next}`, r.next.point);
      }
      if (task.kind === 'crossing' && task.index === 0 && r.point) points.set(`crossing ${task.level} ${task.direction}`, r.point);
    });
  const result = await fitModel(model, { impacts: 'full', scan: true, limit: true, expected: false }, { pool: control.pool, keepPoints: true, inspect });
  const engineSeconds = (performance.now() - t) / 1000;
  control.adjust?.(result);
  const row: AgreementRow = {
    model: label,
    status: result.status,
    compared: 0,
    outOfTolerance: 0,
    empty: 0,
    rungs: result.convergence.refits ?? noRefits(),
    referenceFailed: 0,
    severalMinima: 0,
    engineLower: 0,
    details: [],
    seconds: { engine: engineSeconds, reference: 0 },
  };
  if (result.status !== 'converged') return row;

  const problem = buildProblem(model, REFERENCE_PROBLEM);
  const m = problem.model;
  const clip = (i: number, v: number) => Math.min(m.upper[i], Math.max(m.lower[i], v));
  // A probe is one of several looks for an output the engine left empty: a probe the reference cannot fit is not counted as a failure.
  const checks: { fix: [number, number]; start?: ConditionalPoint; probe?: boolean; judge: (ref: ColdFit, best: ColdFit) => void }[] = [];
  const compare = (what: string, engine: number | null, reference: number, tolerance: number) => {
    row.compared++;
    if (engine === null) {
      row.empty++;
      row.details.push({ what: `${what} (empty)`, engine, reference, tolerance });
    } else if (!(Math.abs(engine - reference) <= tolerance)) {
      row.outOfTolerance++;
      row.details.push({ what, engine, reference, tolerance });
    }
  };

  // A minimum on (or near) a clip edge, against a search no kink stops.
  if (result.convergence.clipEdge || result.convergence.clippedBins.length > 0) {
    const phi = Float64Array.from(result.parameters.map((p) => p.value));
    const gamma = Float64Array.from(result.gammas.list.map((g) => g.value));
    const search = compassSearch(problem, phi, gamma);
    const nll = result.convergence.nll!;
    compare('minimum at the clip edge (NLL)', nll, Math.min(nll, search.nll), 1e-7 * (1 + Math.abs(nll)));
  }

  // Impacts: θ fixed at θ̂ ± σ̂ (post-fit) and θ̂ ± 1 (pre-fit), clipped to the bounds.
  for (const n of result.nuisance) {
    if (n.fixed || !n.postfitImpact || !n.prefitImpact) continue;
    const i = m.names.indexOf(n.name);
    const p = result.parameters[i];
    const sides = [
      ['post-fit +', p.value + p.error!, n.postfitImpact.up],
      ['post-fit −', p.value - p.error!, n.postfitImpact.down],
      ['pre-fit +', p.value + 1, n.prefitImpact.up],
      ['pre-fit −', p.value - 1, n.prefitImpact.down],
    ] as const;
    for (const [what, v, engine] of sides) {
      checks.push({
        fix: [i, clip(i, v)],
        start: points.get(`fix ${i} ${clip(i, v)}`),
        judge: (ref, best) => {
          const delta = ref.mu - best.mu;
          compare(`${n.name} ${what}`, engine, delta, Math.max(1e-5, 2e-3 * Math.abs(delta)));
        },
      });
    }
  }

  // Crossings of the μ scan; an empty one is checked at μ's bound.
  const scan = result.scan;
  if (scan) {
    const muHat = result.summary!.mu.value;
    const crossings = [
      ['68 % low', Q68, scan.crossings68.low, m.lower[0], -1],
      ['68 % high', Q68, scan.crossings68.high, m.upper[0], 1],
      ['95 % low', Q95, scan.crossings95?.low ?? null, m.lower[0], -1],
      ['95 % high', Q95, scan.crossings95?.high ?? null, m.upper[0], 1],
    ] as const;
    const sigmaMu = result.summary!.mu.error ?? 1;
    for (const [what, level, x, bound, direction] of crossings) {
      if (x === null) {
        // An empty crossing: the reference looks for q above the level between μ̂ and the bound
        // (at the bound a fit may be infeasible, every bin with events emptied), and the output
        // counts as empty once q_ref exceeds the level anywhere on the way.
        let found = false;
        const probes = [1, 1.5, 2, 3, 4, 6, 8].map((k) => muHat + direction * k * Math.sqrt(level) * sigmaMu).filter((v) => (direction > 0 ? v < bound : v > bound));
        for (const v of [...probes, bound]) {
          checks.push({
            fix: [0, v],
            probe: true,
            judge: (ref, best) => {
              if (found || 2 * (ref.nll - best.nll) <= level) return;
              found = true;
              compare(`μ crossing ${what}`, null, v, 0);
            },
          });
        }
        continue;
      }
      checks.push({
        fix: [0, x],
        start: points.get(`crossing ${level} ${direction}`),
        judge: (ref, best) => {
          const q = 2 * (ref.nll - best.nll);
          // The crossing's offset from the reference's x where q = level, to first order: where
          // q is above the level the crossing lies nearer to μ̂ by dx, on either side.
          const offset = Math.abs(x - best.mu);
          const dx = ((q - level) * offset) / (2 * level);
          compare(`μ crossing ${what} (offset)`, x - muHat, x - muHat - direction * dx, Math.max(1e-5, 2e-3 * offset));
        },
      });
    }
  }

  // q0 through Z.
  const q0 = result.summary!.discovery;
  if (q0 && result.summary!.mu.value > 0) {
    checks.push({ fix: [0, 0], start: points.get('fix 0 0'), judge: (ref, best) => compare('Z = √q0', Math.sqrt(q0.q0), Math.sqrt(Math.max(0, 2 * (ref.nll - best.nll))), 1e-3) });
  }

  t = performance.now();
  const fixes: ColdFitTask['fixes'] = [[-1, 0], ...checks.map((c): ColdFitTask['fixes'][number] => (c.start ? [...c.fix, c.start.phi, c.start.gamma] : c.fix))];
  const key = `agreement-${process.pid}-${++modelCount}`;
  const run = control.reference ?? (async (task: ColdFitTask) => runColdFits(task));
  const batches: Promise<ColdFit[]>[] = [];
  const size = Math.max(1, Math.ceil(fixes.length / 24));
  for (let k = 0; k < fixes.length; k += size) batches.push(run({ key, model, fixes: fixes.slice(k, k + size) }));
  const cold = (await Promise.all(batches)).flat();
  row.seconds.reference = (performance.now() - t) / 1000;
  const best = cold[0];
  if (!best.ok) {
    row.referenceFailed = cold.length;
    return row;
  }
  checks.forEach((c, k) => {
    const ref = cold[k + 1];
    if (!ref.ok) {
      if (!c.probe) row.referenceFailed++;
      return;
    }
    if (ref.twoMinima) row.severalMinima++;
    if (ref.engineLower) row.engineLower++;
    c.judge(ref, best);
  });
  return row;
}
