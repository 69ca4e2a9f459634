import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitProblem, GlobalObservables } from './compiled-model';
import { quasiNewtonFit } from './conditional-fit';
import { curvatureAt, type FitContext } from './covariance';
import { FitCancelledError } from './errors';
import { declaredHypotheses, plainModel } from './hypothesis-model';
import { negativeLogLikelihood } from './likelihood';
import { createScratch, minimise, type Scratch } from './minimiser';
import { buildProblem, startPoint } from './problem';
import { gaussian, poisson, toyRandom } from './sampling';
import { createWorkspace, evaluateYields } from './yields';

/**
 * Background-only pseudo-experiments of a scan over signal hypotheses (docs/fit-engine.md, "Scan
 * over signal hypotheses"): each toy is one dataset and one set of global observables, drawn
 * from the background-only fit (μ = 0) to the observed data, and fitted under every hypothesis
 * of the scan; it gives q0 at each, so that the toy's largest q0 and its upcrossings are those of
 * one pseudo-experiment over the whole scan.
 *
 * With μ = 0 the hypotheses' models are the same likelihood: a hypothesis replaces signal
 * templates and their effects only, and every signal yield is multiplied by μ, so at μ = 0 every
 * bin's expected count is the backgrounds' alone, with the same effects, floating normalisations
 * and constraints. That holds as long as the signal templates do not change which parameters
 * are held or the γ constraints: a signal template with a variance enters its bin's relative
 * width σ_rb (docs/likelihood.md §4). So the hypotheses are grouped by what their μ = 0
 * likelihood depends on (the held parameters, the γ and their σ), each group's likelihoods are
 * checked to agree at the generation point, and a toy fits μ = 0 once per group: once for the
 * whole scan when the signal templates carry no variances (or the same relative ones).
 *
 * Each toy fit is a minimisation only (no covariance, no refits): μ = 0 from the generation
 * point, then μ free for each hypothesis of the group from that minimum. As for a fit's toys
 * (toys.ts), the minimisation takes quasi-Newton steps whose first inverse Hessian is the
 * curvature of the expected likelihood at the generation point, computed once per hypothesis and
 * setup, with Newton taking over where they stall (conditional-fit.ts), and the same stop on the
 * Newton decrement as every fit; Newton throughout where that curvature is not positive definite.
 * On the medium synthetic model with 30 hypotheses this halved the time of a toy.
 */

export interface ScanToySetup {
  /** Names the setup, so that a worker builds its fitter once per scan. */
  key: string;
  /** The model with its hypotheses. */
  model: ExchangeModel;
  /** The hypotheses of the scan, in its order (by value). */
  keys: string[];
  /** Indices into keys: the hypotheses of a group have the same likelihood at μ = 0, fitted once per toy. */
  groups: number[][];
  /** The background-only fit to the observed data: every dense parameter (μ = 0), and γ per bin (1 where the bin has none). */
  generation: { phi: number[]; gammaByBin: number[] };
}

export interface ScanToyTask {
  setup: ScanToySetup;
  seed: number;
  indices: number[];
}

export interface ScanToyOutcome {
  index: number;
  /** Every fit of the toy converged (the fit at μ = 0 of each group, and each hypothesis's). */
  ok: boolean;
  /** q0 at each hypothesis of the scan, in its order (null when a fit failed). */
  q0: number[] | null;
  message: string | null;
}

const observedOptions = { dataset: 'observed' as const, asimovMu: 1, controlOnly: false, excludeRegions: [] as string[] };

/** The plain model and fit problem of each hypothesis of the scan, fitted to the observed data. */
function hypothesisProblems(model: ExchangeModel, keys: string[]): FitProblem[] {
  const byKey = new Map(declaredHypotheses(model).points.map((p) => [p.key, p]));
  return keys.map((key) => buildProblem(plainModel(model, byKey.get(key)!), observedOptions));
}

/** What a hypothesis's likelihood at μ = 0 depends on beyond the backgrounds, which every hypothesis shares. */
function muZeroSignature(problem: FitProblem): string {
  const m = problem.model;
  return JSON.stringify([m.names, Array.from(problem.held.subarray(1)), Array.from(problem.gammaHeld), Array.from(m.gammaBin), Array.from(m.gammaSigma)]);
}

/** γ of a problem's own layout from values per bin. */
function gammaOf(problem: FitProblem, byBin: ArrayLike<number>): Float64Array {
  const m = problem.model;
  return Float64Array.from(m.gammaBin, (b) => byBin[b]);
}

const atZero = (problem: FitProblem): FitProblem => {
  const held = Uint8Array.from(problem.held);
  held[0] = 1;
  return { ...problem, held };
};

/**
 * The setup of the scan's toys: the hypotheses grouped by their likelihood at μ = 0, and the
 * background-only fit to the observed data they are drawn from. Null setup (with a warning) when
 * that fit does not converge.
 */
export function prepareScanToys(model: ExchangeModel, keys: string[]): { setup: ScanToySetup | null; warnings: string[] } {
  const warnings: string[] = [];
  const problems = hypothesisProblems(model, keys);
  const bySignature = new Map<string, number[]>();
  problems.forEach((p, k) => {
    const signature = muZeroSignature(p);
    bySignature.set(signature, [...(bySignature.get(signature) ?? []), k]);
  });
  const groups = [...bySignature.values()];

  // The generation point: the background-only fit of the first group, from the start values with μ = 0.
  const first = problems[groups[0][0]];
  const m = first.model;
  const zero = atZero(first);
  const start = startPoint(m);
  start.phi[0] = 0;
  const scratch = createScratch(zero);
  const fit = minimise(zero, start.phi, start.gamma, scratch);
  if (fit.status === 'failed' || fit.status === 'cancelled') {
    warnings.push(`The background-only fit (μ = 0) to the observed data did not converge (${fit.message ?? 'no minimum'}): no pseudo-experiments were run, and the upcrossings are those of the observed scan.`);
    return { setup: null, warnings };
  }
  if (fit.edge) warnings.push('The background-only fit the pseudo-experiments are drawn from sits on a clip edge of an expected yield; toys drawn near it may fail.');
  const gammaByBin = new Array<number>(m.nBins).fill(1);
  m.gammaBin.forEach((b, g) => (gammaByBin[b] = fit.gamma[g]));

  // The check of the grouping: within a group, the likelihoods at μ = 0 agree at the generation point.
  const checked: number[][] = [];
  for (const group of groups) {
    const nll = (k: number) => {
      const p = atZero(problems[k]);
      return negativeLogLikelihood(p.model, p.data, p.gammaHeld, fit.phi, gammaOf(p, gammaByBin), createWorkspace(p.model));
    };
    const reference = nll(group[0]);
    const agree = group.filter((k) => Math.abs(nll(k) - reference) <= 1e-9 * (1 + Math.abs(reference)));
    checked.push(agree, ...group.filter((k) => !agree.includes(k)).map((k) => [k]));
  }
  if (checked.length > 1) {
    warnings.push(
      `The hypotheses' likelihoods differ even at μ = 0 (their signal templates change the template-statistics constraints or the parameters held), so each pseudo-experiment fits μ = 0 once per group of hypotheses that agree: ${checked.length} groups instead of one for the whole scan.`,
    );
  }
  const setup: ScanToySetup = { key: `scan-toys:${globalThis.crypto.randomUUID()}`, model, keys, groups: checked, generation: { phi: Array.from(fit.phi), gammaByBin } };
  return { setup, warnings };
}

/** Quasi-Newton steps before Newton takes over, as for a fit's toys (toys.ts: a toy's minimum lies further from its start than a refit's). */
const TOY_STEPS = 80;

export interface ScanToyFitter {
  run(seed: number, indices: readonly number[], signal?: AbortSignal): ScanToyOutcome[];
}

/** Draws and fits the toys of a setup; the problems, their scratch buffers, the curvatures and the expected counts are made once. */
export function createScanToyFitter(setup: ScanToySetup): ScanToyFitter {
  const problems = hypothesisProblems(setup.model, setup.keys);
  const first = problems[setup.groups[0][0]];
  const m = first.model;
  const P = m.nDense;
  const genPhi = Float64Array.from(setup.generation.phi);
  const inFit: number[] = [];
  for (let b = 0; b < m.nBins; b++) if (m.binInFit[b]) inFit.push(b);

  // One dataset, one set of θ centres and one standard normal per bin for the γ centres, shared by every group.
  const data = new Float64Array(m.nBins);
  const theta = new Float64Array(P);
  const z = new Float64Array(m.nBins);
  const ws = createWorkspace(m);
  evaluateYields(m, genPhi, gammaOf(first, setup.generation.gammaByBin), ws);
  const expected = Float64Array.from(ws.nu);

  /** The curvature of the expected likelihood at the generation point (data = ν there, constraints centred there), or null. */
  const reference = (problem: FitProblem, gamma: Float64Array): FitContext | null => {
    const asimov: FitProblem = { ...problem, data: expected, globals: { theta: Float64Array.from(genPhi), gamma: Float64Array.from(gamma) } };
    const curvature = curvatureAt(asimov, genPhi, gamma, createScratch(asimov));
    return curvature.ok ? curvature.context : null;
  };
  const groups = setup.groups.map((members) => {
    const base = problems[members[0]];
    const gammaStart = gammaOf(base, setup.generation.gammaByBin);
    const globals: GlobalObservables = { theta, gamma: new Float64Array(base.model.nGamma) };
    const zero: FitProblem = { ...atZero(base), data, globals };
    const hypotheses = members.map((k) => {
      const problem: FitProblem = { ...problems[k], data, globals };
      return { k, problem, scratch: createScratch(problem), context: reference(problems[k], gammaStart) };
    });
    return { zero, scratch: createScratch(zero), context: reference(atZero(base), gammaStart), globals, gammaStart, hypotheses };
  });

  function draw(seed: number, index: number): void {
    const rand = toyRandom(seed, index);
    for (const b of inFit) data[b] = poisson(rand, expected[b]);
    for (let i = m.thetaStart; i < P; i++) theta[i] = genPhi[i] + gaussian(rand);
    for (const b of inFit) z[b] = gaussian(rand);
    for (const group of groups) {
      const gm = group.zero.model;
      for (let g = 0; g < gm.nGamma; g++) {
        const b = gm.gammaBin[g];
        group.globals.gamma[g] = setup.generation.gammaByBin[b] + gm.gammaSigma[g] * z[b];
      }
    }
  }

  type Fitted = { ok: boolean; phi: Float64Array; gamma: Float64Array; nll: number; message: string | null };
  /** A toy's fit of `problem` from (φ, γ): quasi-Newton from the reference curvature, or Newton without one. */
  const fit = (problem: FitProblem, context: FitContext | null, phi: Float64Array, gamma: Float64Array, scratch: Scratch, signal: AbortSignal | undefined): Fitted => {
    if (context) return quasiNewtonFit({ ...context, problem }, phi, gamma, scratch, 1e-9, TOY_STEPS);
    const r = minimise(problem, phi, gamma, scratch, { signal });
    if (r.status === 'cancelled') throw new FitCancelledError();
    return { ...r, ok: r.status !== 'failed' };
  };

  function one(seed: number, index: number, signal: AbortSignal | undefined): ScanToyOutcome {
    draw(seed, index);
    const q0 = new Array<number>(setup.keys.length);
    for (const group of groups) {
      const r0 = fit(group.zero, group.context, genPhi, group.gammaStart, group.scratch, signal);
      if (!r0.ok) return { index, ok: false, q0: null, message: `the fit with μ held at 0 failed: ${r0.message ?? 'no minimum'}` };
      for (const h of group.hypotheses) {
        const r = fit(h.problem, h.context, r0.phi, r0.gamma, h.scratch, signal);
        if (!r.ok) return { index, ok: false, q0: null, message: `the fit of hypothesis "${setup.keys[h.k]}" failed: ${r.message ?? 'no minimum'}` };
        // q0 = 0 where μ̂ ≤ 0, as for the data (docs/likelihood.md §7)
        q0[h.k] = r.phi[0] > 0 ? Math.max(0, 2 * (r0.nll - r.nll)) : 0;
      }
    }
    return { index, ok: true, q0, message: null };
  }

  return {
    run(seed, indices, signal) {
      const out: ScanToyOutcome[] = [];
      for (const index of indices) {
        if (signal?.aborted) throw new FitCancelledError();
        out.push(one(seed, index, signal));
      }
      return out;
    },
  };
}

/** A worker's batch of toys, with the fitter made for its setup (a worker keeps fitters between batches). */
export function runScanToyTask(task: ScanToyTask, fitter: ScanToyFitter = createScanToyFitter(task.setup)): ScanToyOutcome[] {
  return fitter.run(task.seed, task.indices);
}

/**
 * The toys `indices` in this thread, yielding to the event loop between toys every 25 ms so that
 * an abort (and other work) gets through; each toy's random numbers depend only on (seed, index),
 * so this gives the same toys as batches on threads.
 */
export async function runScanToys(
  setup: ScanToySetup,
  seed: number,
  indices: readonly number[],
  control: { signal?: AbortSignal; onProgress?: (done: number) => void } = {},
): Promise<ScanToyOutcome[]> {
  const fitter = createScanToyFitter(setup);
  const out: ScanToyOutcome[] = [];
  let lastYield = Date.now();
  for (const index of indices) {
    out.push(...fitter.run(seed, [index], control.signal));
    control.onProgress?.(out.length);
    if (Date.now() - lastYield > 25) {
      await new Promise((resolve) => setImmediate(resolve));
      lastYield = Date.now();
    }
    if (control.signal?.aborted) throw new FitCancelledError();
  }
  return out;
}
