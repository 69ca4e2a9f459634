import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptions, type FitOptionsInput, type FitResult, type NuisanceReport, type ParameterScan, type PoiImpact } from '@shared/schemas/fit';
import type { CompiledModel, FitProblem } from './compiled-model';
import type { BreakdownRow, VariantReport } from '@shared/schemas/variants';
import { curvatureAt, gammaVariance, type FitContext } from './covariance';
import { FitCancelledError, FitInputError, throwIfAborted } from './errors';
import { postfitYields, prefitYields } from './expected-yields';
import { informationBreakdown } from './information';
import { addRefits, noRefits, type RefitTask, type RefitResult, type RefitCounts } from './refit-tasks';
import { clippedSampleBins, createScratch, EDGE_TOLERANCE, minimise, type MinimiseResult } from './minimiser';
import { correlationMatrix, errorOf, groupImpact, isAtBound, nuisanceTable, parameterTable, statOnlyError } from './parameters-report';
import { runRefits, type FitPool } from './refit-batches';
import { asimovData, buildProblem, startPoint } from './problem';
import { applyHeld, decorrelationReports, frozenShare, needsBestFit, resolveHeld, variantModel, type HeldValue } from './variants';
import { createWorkspace, evaluateYields } from './yields';
import { assembleScan, Q68, Q95, scanTasks } from './scan';
import { contourOf } from './contour';
import { discovery, goodnessOfFit } from './significance';

export interface FitControl {
  onProgress?: (fraction: number, stage: string) => void;
  signal?: AbortSignal;
  pool?: FitPool;
  /**
   * For checks of the refits (the refit-agreement suite): fix and crossing tasks keep the
   * conditional minimum they found, and `inspect` receives every task with its result.
   */
  keepPoints?: boolean;
  inspect?: (tasks: RefitTask[], results: RefitResult[]) => void;
}

const LIMIT_CL = 0.95;
const BANDS = [-2, -1, 0, 1, 2] as const;

/**
 * Fits a model (docs/likelihood.md §5) and computes everything the review screens show (§6–7).
 * Contract breaks throw FitInputError; cancellation rejects with FitCancelledError; a fit
 * that does not converge resolves with status 'failed' and its convergence report.
 */
export async function fitModel(model: ExchangeModel, optionsInput: FitOptionsInput = {}, control: FitControl = {}): Promise<FitResult> {
  const started = performance.now();
  const parsed = fitOptionsSchema.safeParse(optionsInput);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new FitInputError(`invalid fit option ${issue.path.join('.')}: ${issue.message}`, issue.path as (string | number)[]);
  }
  const options = parsed.data;
  const { signal, pool } = control;
  // Never backwards: the refits that need only the best fit report while the Asimov fits run.
  let reported = 0;
  const progress = (fraction: number, stage: string) => control.onProgress?.((reported = Math.max(reported, Math.min(1, fraction))), stage);
  throwIfAborted(signal);

  // §9.3–9.4 change the model; §9.5 may change the data (an Asimov dataset built on a reference fit)
  const variant = variantModel(model, options);
  let problem = buildProblem(variant.model, options);
  const m = problem.model;
  const warnings: string[] = [];
  for (let i = 0; i < m.nDense; i++) {
    if (problem.held[i] && !(i === 0 && options.controlOnly)) warnings.push(`${m.names[i]} affects no bin in the fit and is held at its start value.`);
  }
  progress(0, 'fit');
  const reference = options.expectedFrom === 'prefit' ? null : referenceFit(variant.model, options, signal);
  if (reference && 'failure' in reference) {
    const none = { started, options, problem, warnings, min: reference.min, clipped: [] };
    return failedResult(none, `the reference fit for expected numbers (${options.expectedFrom === 'control' ? 'control regions, μ held at 0' : 'all regions, μ held at 0'}) did not converge: ${reference.failure}`);
  }
  const expectedProblem = (mu: number): FitProblem => (reference ? { ...problem, ...measuredAsimov(m, reference, mu) } : { ...problem, data: asimovData(m, mu) });
  if (options.dataset === 'asimov' && reference) problem = expectedProblem(options.asimovMu);
  const scratch = createScratch(problem);
  const start = startPoint(m);
  // §9.1–9.2: what is held, at a number or at its best fit to the same data
  let held: HeldValue[] = [];
  if (options.hold.length || options.holdGroups.length || options.statOnly) {
    let best: MinimiseResult | null = null;
    if (needsBestFit(options)) {
      best = minimise(problem, start.phi, start.gamma, scratch, { signal });
      if (best.status === 'cancelled') throw new FitCancelledError();
      if (best.status === 'failed') return failedResult({ started, options, problem, warnings, min: best, clipped: [] }, `the fit with nothing held, which gives the values held at "best", did not converge: ${best.message}`);
    }
    held = resolveHeld(m, problem, options, best ? best.phi : null);
    if (best) {
      start.phi.set(best.phi);
      if (options.statOnly) start.gamma.set(best.gamma);
    }
    problem = applyHeld(problem, held, start.phi, options.statOnly);
  }
  const min = minimise(problem, start.phi, start.gamma, scratch, { signal });
  if (min.status === 'cancelled') throw new FitCancelledError();
  const clipped = clippedSampleBins(problem, scratch.ws, min.status === 'edge' ? EDGE_TOLERANCE : 0).map(({ sample, bin }) => ({
    region: m.regions[m.sampleRegion[sample]].key,
    bin,
    process: m.processes[m.sampleProcess[sample]].key,
  }));
  if (clipped.length > 0) {
    const names = clipped.slice(0, 10).map((c) => `${c.region} bin ${c.bin} (${c.process})`);
    warnings.push(`The expected yield is clipped at zero in ${clipped.length} bin(s): ${names.join(', ')}${clipped.length > 10 ? ', …' : ''}.` + edgeSentence(min));
  } else if (min.edge) warnings.push(edgeSentence(min).trim());
  if (min.message && min.status !== 'failed') warnings.push(`Newton: ${min.message}.`);

  const base = { started, options, problem, warnings, min, clipped };
  if (min.status === 'failed') return failedResult(base, min.message ?? 'the fit did not converge');
  throwIfAborted(signal);
  const curvature = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!curvature.ok) return failedResult(base, curvature.message);
  const ctx = curvature.context;
  progress(0.25, 'covariance');

  const muFree = !problem.held[0];
  const P = m.nDense;
  const contexts: FitContext[] = [ctx];
  const tasks: RefitTask[] = [];
  const push = (task: RefitTask) => tasks.push(control.keepPoints && (task.kind === 'fix' || task.kind === 'crossing') ? { ...task, keepPoint: true } : task) - 1;

  // Asimov datasets for the expected significance (μ = 1) and the limit (μ = 0): pre-fit, or
  // built on the reference fit (§9.5), whose minimum is then known to be the reference point
  const asimovContext = (mu: number, what: string): number | null => {
    throwIfAborted(signal);
    const pa: FitProblem = expectedProblem(mu);
    const sa = createScratch(pa);
    const s0 = reference ? { phi: Float64Array.from(reference.phi), gamma: Float64Array.from(reference.gamma) } : startPoint(m);
    if (reference) s0.phi[0] = mu;
    for (const h of held) s0.phi[h.index] = h.value;
    const r = minimise(pa, s0.phi, s0.gamma, sa, { signal });
    if (r.status === 'cancelled') throw new FitCancelledError();
    if (r.status === 'failed') {
      warnings.push(`The fit to the Asimov dataset for the ${what} failed: ${r.message}.`);
      return null;
    }
    const c = curvatureAt(pa, r.phi, r.gamma, sa);
    if (!c.ok) {
      warnings.push(`The ${what} is not available: ${c.message}`);
      return null;
    }
    return contexts.push(c.context) - 1;
  };

  // Refits. Those that need only the best fit (q0, impacts, scan) start on the pool at once;
  // the Asimov fits, the refits on them and the tables that need no refit follow in this
  // thread meanwhile, so that neither waits for the other.
  const zeroAllowed = m.lower[0] <= 0 && m.upper[0] >= 0;
  const q0Job = muFree && zeroAllowed && ctx.phi[0] > 0 ? push({ kind: 'fix', context: 0, index: 0, value: 0 }) : null;
  // One task per parameter and direction: θ̂ ± σ̂ (post-fit), then θ̂ ± 1 (pre-fit) from there.
  const impactJobs = new Map<number, { up: number; down: number }>();
  if (options.impacts === 'full' && muFree) {
    for (let i = m.thetaStart; i < P; i++) {
      if (problem.held[i]) continue;
      const sigma = errorOf(ctx, i)!;
      const clip = (v: number) => Math.min(m.upper[i], Math.max(m.lower[i], v));
      const th = ctx.phi[i];
      const at = (sign: 1 | -1) => push({ kind: 'fix', context: 0, index: i, value: clip(th + sign * sigma), next: clip(th + sign) });
      impactJobs.set(i, { up: at(1), down: at(-1) });
    }
  }
  let scanPlan: { grid: number[]; first: number } | null = null;
  if (options.scan && muFree) {
    const { grid, tasks: sj } = scanTasks(ctx, 0, 0, options.scanPoints);
    scanPlan = { grid, first: tasks.length };
    sj.forEach(push);
  }
  // A model with parameters of interest besides μ: each free one's scan (or, without scans, its
  // crossings); μ's come from its own scan when there is one.
  const poiIndices = m.kinds.flatMap((kind, i) => (kind === 'poi' ? [i] : []));
  const poiJobs = poiIndices.length > 1 ? planPoi(ctx, poiIndices, push, options, scanPlan) : null;
  const firstWave = tasks.length;
  const done = [0, 0];
  const waveProgress = (wave: number, total: number) => (f: number) => {
    done[wave] = f * total;
    progress(0.35 + (0.6 * (done[0] + done[1])) / Math.max(1, tasks.length), 'refits');
  };
  const firstRun = runRefits([ctx], tasks.slice(), { pool, signal, onProgress: waveProgress(0, firstWave) });
  firstRun.catch(() => undefined); // awaited below; a cancellation must not surface as unhandled meanwhile

  const expectedCtx = muFree && options.expected ? asimovContext(1, 'expected significance') : null;
  const limitCtx = muFree && options.limit ? asimovContext(0, 'expected limit') : null;
  progress(0.35, 'asimov');
  const expectedJob = expectedCtx !== null && zeroAllowed && contexts[expectedCtx].phi[0] > 0 ? push({ kind: 'fix', context: expectedCtx, index: 0, value: 0 }) : null;
  // §9.7: each group held at its best fit (and every γ, and every θ), μ's q = 1 crossings again
  const breakdownPlan = options.breakdown && muFree ? planBreakdown(ctx, problem, scratch, contexts, push, scanPlan === null, warnings) : null;
  const limitJobs =
    limitCtx !== null
      ? {
          observed: push({ kind: 'observed-limit', context: 0, asimov: limitCtx, cl: LIMIT_CL }),
          bands: BANDS.map((n) => push({ kind: 'expected-limit', context: limitCtx, n, cl: LIMIT_CL })),
        }
      : null;

  const secondRun = runRefits(contexts, tasks.slice(firstWave), { pool, signal, onProgress: waveProgress(1, tasks.length - firstWave) });
  secondRun.catch(() => undefined);
  const information = informationBreakdown(ctx);
  const yields = { prefit: prefitYields(m), postfit: postfitYields(ctx) };
  const gammaVariances = Array.from({ length: m.nGamma }, (_, g) => gammaVariance(ctx, g));
  const results = [...(await firstRun), ...(await secondRun)];
  throwIfAborted(signal);
  control.inspect?.(tasks, results);
  const refits = countRefits(results);
  if (refits.failed > 0) warnings.push(`${refits.failed} conditional fit(s) failed on every rung (warm, Newton, cold); the outputs that need them are left empty.`);
  lowerMinimumWarning(tasks, results, contexts, warnings);

  // Per-parameter tables.
  const parameters = parameterTable(ctx);
  const nuisance = nuisanceTable(ctx, options.overConstraintThreshold);
  const muHat = ctx.phi[0];
  const delta = (r: RefitResult, what: string): number | null => {
    if (!r.ok || r.mu === null) {
      warnings.push(`The refit for ${what} did not converge on any rung; its impact is left empty.`);
      return null;
    }
    return r.mu - muHat;
  };
  for (const [i, plan] of impactJobs) {
    const row = nuisance[i - m.thetaStart];
    const [up, down] = [results[plan.up], results[plan.down]];
    row.postfitImpact = { up: delta(up, `${m.names[i]} at +1σ̂`), down: delta(down, `${m.names[i]} at −1σ̂`) };
    row.prefitImpact = { up: delta(up.next!, `${m.names[i]} at +1`), down: delta(down.next!, `${m.names[i]} at −1`) };
  }
  rank(nuisance, nuisance.map((r) => r.fixed));

  // Grouped impacts and the statistical / systematic split.
  const groupedImpacts: FitResult['groupedImpacts'] = [];
  if (muFree) {
    const groups = new Map<string, number[]>();
    for (let i = m.thetaStart; i < P; i++) {
      if (problem.held[i]) continue;
      const g = m.groups[i] ?? 'ungrouped';
      groups.set(g, [...(groups.get(g) ?? []), i]);
    }
    for (const [group, members] of groups) {
      const impact = groupImpact(ctx, members);
      if (impact !== null) groupedImpacts.push({ group, impact, parameters: members.map((i) => m.names[i]) });
    }
    if (ctx.varMuGammaFixed !== null) {
      const impact = Math.sqrt(Math.max(0, ctx.V[0] - ctx.varMuGammaFixed));
      groupedImpacts.push({ group: 'template statistics', impact, parameters: [] });
    }
    groupedImpacts.sort((a, b) => b.impact - a.impact);
  }
  const sigmaMu = errorOf(ctx, 0);
  const stat = statOnlyError(ctx);
  const syst = sigmaMu !== null && stat !== null ? Math.sqrt(Math.max(0, sigmaMu * sigmaMu - stat * stat)) : null;

  // Scan and intervals.
  const scan = scanPlan ? assembleScan(ctx, 0, scanPlan.grid, results.slice(scanPlan.first, scanPlan.first + scanPlan.grid.length + 4), warnings) : null;
  const offsets = (c: { low: number | null; high: number | null } | null) => (c ? { low: c.low === null ? null : c.low - muHat, high: c.high === null ? null : c.high - muHat } : null);

  // Significance, expected significance, limit.
  const qFrom = (k: number | null, c: FitContext, what: string): number | null => {
    if (k === null) return 0;
    const r = results[k];
    if (!r.ok || r.nll === null) {
      warnings.push(`The conditional fit at μ = 0 for the ${what} did not converge.`);
      return null;
    }
    return 2 * (r.nll - c.nll);
  };
  const q0 = muFree && zeroAllowed ? qFrom(q0Job, ctx, 'discovery significance') : null;
  const q0Expected = expectedCtx !== null && zeroAllowed ? qFrom(expectedJob, contexts[expectedCtx], 'expected significance') : null;
  let limit: NonNullable<FitResult['summary']>['limit'] = null;
  if (limitJobs) {
    const value = (k: number, what: string) => {
      const r = results[k];
      if (!r.ok || r.message) warnings.push(`${what}: ${r.message ?? 'not available'}.`);
      return r.ok ? r.value : null;
    };
    const bands = limitJobs.bands.map((k, j) => value(k, `Expected limit at ${BANDS[j]}σ`));
    limit = {
      cl: LIMIT_CL,
      observed: value(limitJobs.observed, 'Observed limit'),
      expected: { minus2: bands[0], minus1: bands[1], median: bands[2], plus1: bands[3], plus2: bands[4] },
    };
  }

  // Gammas.
  const gammaList = Array.from({ length: m.nGamma }, (_, g) => {
    const b = m.gammaBin[g];
    const region = m.regions[m.binRegion[b]];
    const variance = gammaVariances[g];
    return {
      name: `tstat:${region.key}:${b - region.firstBin}`,
      region: region.key,
      bin: b - region.firstBin,
      value: ctx.gamma[g],
      error: variance === null ? null : Math.sqrt(Math.max(0, variance)),
      prior: m.gammaSigma[g],
      fixed: problem.gammaHeld[g] === 1,
      atBound: !problem.gammaHeld[g] && isAtBound(ctx.gamma[g], 0, 10),
    };
  });
  const freeGammas = gammaList.filter((g) => !g.fixed);
  const atBound = [
    ...parameters.filter((p) => p.atBound).map((p) => p.name),
    ...gammaList.filter((g) => g.atBound).map((g) => g.name),
  ];
  const heldOnBound = new Set(gammaList.filter((g) => g.atBound && g.error === null).map((g) => g.name));
  for (const name of atBound)
    warnings.push(
      heldOnBound.has(name)
        ? `${name} is at a bound of its range, where the minimum presses it; the covariance holds it there (no σ), as the curvature of a free parameter there is not positive.`
        : `${name} is at a bound of its range; its σ describes the curvature there only.`,
    );

  const breakdown = breakdownPlan ? assembleBreakdown(breakdownPlan, results, ctx, scan, groupedImpacts, syst) : null;
  const variantReport: VariantReport = {
    held: held.map((h) => ({ parameter: m.names[h.index], value: h.value, asked: h.asked })),
    statOnly: options.statOnly,
    templateStats: options.templateStats,
    expectedFrom: options.expectedFrom,
    hiddenMu: options.hiddenMu,
    decorrelation: decorrelationReports(m, problem.held, ctx.phi, ctx.V, variant.decorrelation),
    breakdown,
  };
  const gof = goodnessOfFit(m, problem.data, scratch.ws.nu, problem.held);
  throwIfAborted(signal);
  const result: FitResult = {
    status: 'converged',
    model: { name: m.name, regionsInFit: m.regions.filter((r) => r.inFit).map((r) => r.key) },
    options,
    convergence: {
      iterations: min.iterations,
      decrement: finiteOrNull(min.decrement),
      nll: ctx.nll,
      parametersAtBound: atBound,
      clippedBins: clipped,
      conditionNumber: finiteOrNull(curvature.conditionNumber),
      warnings,
      failure: null,
      seconds: (performance.now() - started) / 1000,
      refits,
      clipEdge: edgeReport(min),
    },
    parameters,
    nuisance,
    gammas: {
      count: m.nGamma,
      maxAbsPull: freeGammas.length ? Math.max(...freeGammas.map((g) => Math.abs(g.value - 1) / g.prior)) : null,
      list: gammaList,
    },
    correlation: correlationMatrix(ctx),
    summary: {
      mu: {
        value: muHat,
        fixed: !muFree,
        error: sigmaMu,
        interval68: scan ? offsets(scan.crossings68) : null,
        interval95: scan ? offsets(scan.crossings95) : null,
        stat,
        syst,
      },
      discovery: q0 === null ? null : discovery(q0),
      expected: q0Expected === null ? null : { asimovMu: 1, ...discovery(q0Expected) },
      limit,
      goodnessOfFit: gof,
    },
    groupedImpacts,
    scan,
    information,
    yields,
    data: dataSection(problem, options),
    variant: variantReport,
  };
  if (poiJobs) result.poi = poiSection(ctx, poiJobs, results, warnings, impactJobs, nuisance, scan);
  if (options.contour) {
    progress(0.97, 'contour');
    result.contour = contourOf(ctx, options.contour, { signal });
    if (result.contour.failure) warnings.push(`No contour of ${options.contour.join(' and ')}: ${result.contour.failure}.`);
    else if (result.contour.points.failed > 0) warnings.push(`${result.contour.points.failed} point(s) of the contour of ${options.contour.join(' and ')} did not converge and are left out.`);
  }
  progress(1, 'done');
  return result;
}

/**
 * §9.5, the reference of expected numbers: the best fit of the control regions alone (`control`)
 * or of all regions (`background`), to the observed data, with μ held at 0.
 */
function referenceFit(model: ExchangeModel, options: FitResult['options'], signal: AbortSignal | undefined): { phi: Float64Array; gamma: Float64Array } | { failure: string; min: MinimiseResult } {
  const pr = buildProblem(model, { ...options, dataset: 'observed', controlOnly: options.expectedFrom === 'control' });
  pr.held = Uint8Array.from(pr.held);
  pr.held[0] = 1;
  const s0 = startPoint(pr.model);
  s0.phi[0] = 0;
  const r = minimise(pr, s0.phi, s0.gamma, createScratch(pr), { signal });
  if (r.status === 'cancelled') throw new FitCancelledError();
  if (r.status === 'failed') return { failure: r.message ?? 'no minimum', min: r };
  return { phi: r.phi, gamma: r.gamma };
}

/**
 * §9.5: the Asimov dataset at μ_inj with everything else at the reference fit, n = ν(μ_inj, k̂, θ̂,
 * γ̂) in every bin, and the global observables at the reference's θ̂ and γ̂, so that a fit to it
 * returns the reference values.
 */
function measuredAsimov(m: CompiledModel, reference: { phi: Float64Array; gamma: Float64Array }, mu: number): Pick<FitProblem, 'data' | 'globals'> {
  const phi = Float64Array.from(reference.phi);
  phi[0] = mu;
  const ws = createWorkspace(m);
  evaluateYields(m, phi, reference.gamma, ws, true);
  return { data: Float64Array.from(ws.nu), globals: { theta: Float64Array.from(reference.phi), gamma: Float64Array.from(reference.gamma) } };
}

type BreakdownPlan = { rows: { group: string; context: number; tasks: [number, number] }[]; nominalTasks: [number, number] | null };

/**
 * §9.7: a context per group with the group held at the best fit (the minimum is the same point,
 * the curvature is that of the problem with the group held), and μ's q = 1 crossings on each;
 * "template statistics" holds every γ and "all systematics" every θ. The nominal crossings come
 * from the scan, or get tasks of their own without one.
 */
function planBreakdown(
  ctx: FitContext,
  problem: FitProblem,
  scratch: ReturnType<typeof createScratch>,
  contexts: FitContext[],
  push: (task: RefitTask) => number,
  ownNominal: boolean,
  warnings: string[],
): BreakdownPlan {
  const m = problem.model;
  const groups = new Map<string, number[]>();
  for (let i = m.thetaStart; i < m.nDense; i++) {
    if (problem.held[i]) continue;
    const g = m.groups[i] ?? 'ungrouped';
    groups.set(g, [...(groups.get(g) ?? []), i]);
  }
  const plans: { group: string; thetas: number[]; gammas: boolean }[] = [...groups].map(([group, thetas]) => ({ group, thetas, gammas: false }));
  if (problem.gammaHeld.some((h) => !h)) plans.push({ group: 'template statistics', thetas: [], gammas: true });
  const all = [...groups.values()].flat();
  if (all.length) plans.push({ group: 'all systematics', thetas: all, gammas: false });
  const crossings = (c: number): [number, number] => [push({ kind: 'crossing', context: c, index: 0, level: 1, direction: -1 }), push({ kind: 'crossing', context: c, index: 0, level: 1, direction: 1 })];
  const rows: BreakdownPlan['rows'] = [];
  for (const plan of plans) {
    const held = Uint8Array.from(problem.held);
    for (const i of plan.thetas) held[i] = 1;
    const pg: FitProblem = { ...problem, held, gammaHeld: plan.gammas ? new Uint8Array(problem.gammaHeld.length).fill(1) : problem.gammaHeld };
    const c = curvatureAt(pg, ctx.phi, ctx.gamma, scratch);
    if (!c.ok) {
      warnings.push(`The breakdown for ${plan.group} is not available: ${c.message}`);
      continue;
    }
    const index = contexts.push(c.context) - 1;
    rows.push({ group: plan.group, context: index, tasks: crossings(index) });
  }
  return { rows, nominalTasks: ownNominal ? crossings(0) : null };
}

function assembleBreakdown(plan: BreakdownPlan, results: RefitResult[], ctx: FitContext, scan: FitResult['scan'], grouped: FitResult['groupedImpacts'], syst: number | null): BreakdownRow[] {
  const mu = ctx.phi[0];
  const sides = (tasks: [number, number]) => {
    const at = (k: number) => (results[k].ok && results[k].value !== null ? Math.abs(results[k].value! - mu) : null);
    return { low: at(tasks[0]), high: at(tasks[1]) };
  };
  const nominal = plan.nominalTasks
    ? sides(plan.nominalTasks)
    : { low: scan?.crossings68.low != null ? Math.abs(scan.crossings68.low - mu) : null, high: scan?.crossings68.high != null ? Math.abs(scan.crossings68.high - mu) : null };
  return plan.rows.map((row) => {
    const share = frozenShare(nominal, sides(row.tasks));
    const schur = row.group === 'all systematics' ? syst : (grouped.find((g) => g.group === row.group)?.impact ?? null);
    return { group: row.group, ...share, schur };
  });
}

/** The clip-edge outcome for the report (docs/likelihood.md §10: the edge held, or released to a lower NLL). */
/**
 * Per parameter of interest: where its scan's refits or its crossings (q = 1, then q = 3.84, low
 * then high) start in the task list; null when it is held. μ's scan is the result's own.
 */
type PoiJobs = Map<number, { grid: number[]; first: number } | null>;

function planPoi(ctx: FitContext, indices: number[], push: (task: RefitTask) => number, options: FitOptions, muScan: { grid: number[]; first: number } | null): PoiJobs {
  const free = (i: number) => !ctx.problem.held[i] && ctx.V[i * ctx.problem.model.nDense + i] > 0;
  const jobs: PoiJobs = new Map();
  for (const index of indices) {
    if (!free(index)) jobs.set(index, null);
    else if (index === 0 && muScan) jobs.set(index, muScan);
    else if (options.scan) {
      const { grid, tasks } = scanTasks(ctx, 0, index, options.scanPoints);
      const first = tasks.map(push)[0];
      jobs.set(index, { grid, first });
    } else {
      const first = push({ kind: 'crossing', context: 0, index, level: Q68, direction: -1 });
      push({ kind: 'crossing', context: 0, index, level: Q68, direction: 1 });
      push({ kind: 'crossing', context: 0, index, level: Q95, direction: -1 });
      push({ kind: 'crossing', context: 0, index, level: Q95, direction: 1 });
      jobs.set(index, { grid: [], first });
    }
  }
  return jobs;
}

/**
 * Value, σ, q = 1 and q = 3.84 intervals (and scan) of every parameter of interest, their
 * correlations (among the free ones), and the impact of every nuisance parameter on each one
 * besides μ, read from the same refits as μ's: each refit's minimum carries every parameter of
 * interest, so Δ = value at the refit − best fit, and ranks as the nuisance table ranks μ's.
 */
function poiSection(
  ctx: FitContext,
  jobs: PoiJobs,
  results: RefitResult[],
  warnings: string[],
  impactJobs: Map<number, { up: number; down: number }>,
  nuisance: NuisanceReport[],
  muScan: ParameterScan | null,
): NonNullable<FitResult['poi']> {
  const m = ctx.problem.model;
  const P = m.nDense;
  const indices = [...jobs.keys()];
  const list = indices.map((i, position) => {
    const plan = jobs.get(i)!;
    const name = m.names[i];
    let scan: ParameterScan | null = null;
    let interval68: { low: number | null; high: number | null } | null = null;
    let interval95: { low: number | null; high: number | null } | null = null;
    if (plan && plan.grid.length > 0) {
      // μ's scan is the result's own (assembled once, with its warnings)
      scan = i === 0 && muScan ? muScan : assembleScan(ctx, i, plan.grid, results.slice(plan.first, plan.first + plan.grid.length + 4), warnings);
      interval68 = scan.crossings68;
      interval95 = scan.crossings95;
    } else if (plan) {
      const crossing = (k: number) => {
        const r = results[plan.first + k];
        if (!r.ok) warnings.push(`A crossing of ${name} could not be located: ${r.message ?? 'a conditional fit failed'}.`);
        return r.ok ? r.value : null;
      };
      interval68 = { low: crossing(0), high: crossing(1) };
      interval95 = { low: crossing(2), high: crossing(3) };
    }
    const impacts = i === 0 || !plan ? null : poiImpacts(ctx, i, position, impactJobs, results, nuisance, name, warnings);
    return { name, label: m.labels[i], value: ctx.phi[i], fixed: ctx.problem.held[i] === 1, error: errorOf(ctx, i), interval68, interval95, scan: i === 0 ? null : scan, impacts };
  });
  const free = indices.filter((i) => !ctx.problem.held[i]);
  const values: number[] = [];
  for (const i of free) {
    for (const j of free) {
      const den = Math.sqrt(ctx.V[i * P + i] * ctx.V[j * P + j]);
      values.push(i === j ? 1 : den > 0 ? Math.max(-1, Math.min(1, ctx.V[i * P + j] / den)) : 0);
    }
  }
  return { list, correlation: { names: free.map((i) => m.names[i]), values } };
}

/** The nuisance table's impacts, on the parameter of interest at `index` (`position` in the refits' `pois`). */
function poiImpacts(
  ctx: FitContext,
  index: number,
  position: number,
  impactJobs: Map<number, { up: number; down: number }>,
  results: RefitResult[],
  nuisance: NuisanceReport[],
  name: string,
  warnings: string[],
): PoiImpact[] {
  const m = ctx.problem.model;
  const P = m.nDense;
  const hat = ctx.phi[index];
  const delta = (r: RefitResult | undefined, what: string): number | null => {
    if (!r?.ok) return null; // the warning for μ's impacts already names this refit
    if (!r.pois) {
      warnings.push(`The refit for ${what} did not report ${name}; its impact on ${name} is left empty.`);
      return null;
    }
    return r.pois[position] - hat;
  };
  const rows: PoiImpact[] = nuisance.map((row, k) => {
    const i = m.thetaStart + k;
    const sigma = row.constraint;
    const plan = impactJobs.get(i);
    const [up, down] = plan ? [results[plan.up], results[plan.down]] : [undefined, undefined];
    return {
      name: row.name,
      quickImpact: !row.fixed && sigma !== null && sigma > 0 ? ctx.V[index * P + i] / sigma : null,
      postfitImpact: plan ? { up: delta(up, `${row.name} at +1σ̂`), down: delta(down, `${row.name} at −1σ̂`) } : null,
      prefitImpact: plan ? { up: delta(up?.next, `${row.name} at +1`), down: delta(down?.next, `${row.name} at −1`) } : null,
      rank: null,
    };
  });
  rank(rows, nuisance.map((r) => r.fixed));
  return rows;
}

function edgeReport(min: MinimiseResult): FitResult['convergence']['clipEdge'] {
  return min.edge ? { kept: min.edge.kept, heldNll: min.edge.heldNll, releasedNll: min.edge.releasedNll } : null;
}

function edgeSentence(min: MinimiseResult): string {
  const e = min.edge;
  if (!e) return '';
  if (e.kept === 'released') return ` The fit met a clip edge; leaving it lowered the NLL by ${(e.heldNll - e.releasedNll!).toExponential(2)}, so the minimum off the edge is kept.`;
  const tried = e.releasedNll === null ? 'leaving it to either side raises the NLL' : `leaving it reached an NLL higher by ${(e.releasedNll - e.heldNll).toExponential(2)}`;
  return ` The minimum sits on that edge (${tried}): the fit holds the edge, where the decrement is measured along it.`;
}

/** Conditional fits of every task (the pre-fit refits of impact tasks included), by rung. */
function countRefits(results: RefitResult[]): RefitCounts {
  const total = noRefits();
  for (const r of results) {
    addRefits(total, r.refits);
    if (r.next) addRefits(total, r.next.refits);
  }
  return total;
}

/**
 * A conditional fit can only lie above the minimum. One that lies below it by more than the
 * rounding found another, lower minimum: the likelihood has several, and the best fit is not
 * the lowest (docs/likelihood.md gives no rule for this; the result says so rather than hiding it).
 */
function lowerMinimumWarning(tasks: RefitTask[], results: RefitResult[], contexts: FitContext[], warnings: string[]): void {
  let lowest = 0;
  let where = '';
  results.forEach((r, k) => {
    const task = tasks[k];
    if (task.kind !== 'fix') return;
    const ctx = contexts[task.context];
    const m = ctx.problem.model;
    for (const [res, value] of [[r, task.value], [r.next, task.next]] as const) {
      if (!res?.ok || res.nll === null || value === undefined) continue;
      const below = ctx.nll - res.nll;
      if (below > 1e-7 * (1 + Math.abs(ctx.nll)) && below > lowest) {
        lowest = below;
        where = `${m.names[task.index]} = ${Number(value.toPrecision(4))}`;
      }
    }
  });
  if (lowest > 0) warnings.push(`A refit with ${where} reached an NLL ${lowest.toExponential(2)} below the best fit: the likelihood has more than one minimum, and the best fit is not the lowest.`);
}

/** Orders by the largest post-fit |Δ| (falling back to the quick impact without refits); held rows get no rank. */
function rank(rows: Pick<NuisanceReport, 'postfitImpact' | 'quickImpact' | 'rank'>[], held: boolean[]): void {
  type Row = (typeof rows)[number];
  const key = (r: Row) =>
    r.postfitImpact ? Math.max(Math.abs(r.postfitImpact.up ?? 0), Math.abs(r.postfitImpact.down ?? 0)) : r.quickImpact === null ? null : Math.abs(r.quickImpact);
  const ranked = rows.filter((r, k) => !held[k] && key(r) !== null).sort((a, b) => key(b)! - key(a)!);
  ranked.forEach((r, k) => (r.rank = k + 1));
}

function finiteOrNull(x: number): number | null {
  return Number.isFinite(x) ? x : null;
}

function dataSection(problem: FitProblem, options: FitResult['options']): FitResult['data'] {
  const m = problem.model;
  return {
    dataset: options.dataset,
    asimovMu: options.dataset === 'asimov' ? options.asimovMu : null,
    regions: m.regions.map((r) => ({
      region: r.key,
      inFit: r.inFit,
      values: options.dataset === 'asimov' || r.inFit ? Array.from(problem.data.subarray(r.firstBin, r.firstBin + r.nBins)) : r.observed,
    })),
  };
}

interface FailureBase {
  started: number;
  options: FitResult['options'];
  problem: FitProblem;
  warnings: string[];
  min: MinimiseResult;
  clipped: FitResult['convergence']['clippedBins'];
}

/** A failed fit: its report, the pre-fit yields and the data, and nothing from the minimum. */
function failedResult(base: FailureBase, failure: string): FitResult {
  const { problem, options, min } = base;
  const m = problem.model;
  return {
    status: 'failed',
    model: { name: m.name, regionsInFit: m.regions.filter((r) => r.inFit).map((r) => r.key) },
    options,
    convergence: {
      iterations: min.iterations,
      decrement: finiteOrNull(min.decrement),
      nll: null,
      parametersAtBound: [],
      clippedBins: base.clipped,
      conditionNumber: null,
      warnings: base.warnings,
      failure,
      seconds: (performance.now() - base.started) / 1000,
      refits: noRefits(),
      clipEdge: edgeReport(min),
    },
    parameters: [],
    nuisance: [],
    gammas: { count: m.nGamma, maxAbsPull: null, list: [] },
    correlation: null,
    summary: null,
    groupedImpacts: [],
    scan: null,
    information: [],
    yields: { prefit: prefitYields(m), postfit: null },
    data: dataSection(problem, options),
  };
}
