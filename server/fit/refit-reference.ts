import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitProblem } from './compiled-model';
import { negativeLogLikelihood } from './likelihood';
import { createScratch, minimise, type Scratch } from './minimiser';
import { buildProblem, startPoint } from './problem';

/**
 * The reference every refit is checked against (docs/likelihood.md §10): a cold fit, that
 * is a fresh minimisation by Newton with a fresh Hessian at every step (never the warm steps it
 * checks), to a decrement of 1e-12 instead of the refits' 1e-9, followed by up to three more
 * Newton steps from where it stopped. It starts from the model's start values with the
 * parameter held; and since the profile is the minimum over the other parameters, where the
 * likelihood has more than one minimum (same-side variations, clipped templates) it also starts
 * from the reference's own best fit with the parameter moved to its value (by continuation where
 * that start is infeasible, coldAlong), and keeps the lower NLL. With no parameter held it is the reference best fit (μ̂ and the minimum NLL).
 */
export interface ColdFit {
  ok: boolean;
  nll: number;
  mu: number;
  /** Newton decrement of the last step taken. */
  decrement: number;
  /** The cold fits from the two starts reached different minima (NLLs more than 1e-6 apart). */
  twoMinima: boolean;
  /**
   * Newton from the engine's own conditional minimum (when given) reached a lower NLL than every
   * start of the reference's own, by more than 1e-9 relative: the reference had missed that minimum.
   */
  engineLower: boolean;
  message: string | null;
}

/** The fit options the refit-agreement suite uses: observed data, all signal and control regions. */
export const REFERENCE_PROBLEM = { dataset: 'observed', asimovMu: 1, controlOnly: false, excludeRegions: [] as string[] } as const;

interface Start {
  phi: Float64Array;
  gamma: Float64Array;
}

/** Newton from one start with φ_index held at value (index −1: nothing held), polished. */
function coldFrom(problem: FitProblem, index: number, value: number, start: Start, scratch: Scratch): { ok: boolean; nll: number; phi: Float64Array; gamma: Float64Array; decrement: number; message: string | null } {
  const held = Uint8Array.from(problem.held);
  const phi = Float64Array.from(start.phi);
  if (index >= 0) {
    held[index] = 1;
    phi[index] = value;
  }
  const p: FitProblem = { ...problem, held };
  const first = minimise(p, phi, start.gamma, scratch, { tolerance: 1e-12, maxIterations: 200 });
  if (first.status === 'failed' || first.status === 'cancelled') return { ok: false, nll: NaN, phi, gamma: start.gamma, decrement: first.decrement, message: first.message };
  const polished = minimise(p, first.phi, first.gamma, scratch, { tolerance: 1e-16, maxIterations: 3 });
  const last = polished.status !== 'cancelled' && polished.nll <= first.nll ? polished : first;
  return { ok: true, nll: last.nll, phi: last.phi, gamma: last.gamma, decrement: last.decrement, message: null };
}

/**
 * From the best fit to φ_index = value by continuation: where the direct start fails (moving one
 * parameter alone can empty a bin that has events, where the NLL is infinite), the path is
 * halved, the midpoint fitted from the best fit and the rest of the way from there, down to
 * 1/64 of the move (Nocedal & Wright, §11.3, on homotopy methods).
 */
function coldAlong(problem: FitProblem, index: number, from: number, value: number, start: Start, scratch: Scratch, depth = 0): ReturnType<typeof coldFrom> {
  const direct = coldFrom(problem, index, value, start, scratch);
  if (direct.ok || depth >= 6) return direct;
  const mid = (from + value) / 2;
  const half = coldAlong(problem, index, from, mid, start, scratch, depth + 1);
  if (!half.ok) return direct;
  return coldAlong(problem, index, mid, value, { phi: half.phi, gamma: half.gamma }, scratch, depth + 1);
}

export function coldFit(problem: FitProblem, index: number, value: number, scratch: Scratch = createScratch(problem), best: Start | null = null, engine: Start | null = null): ColdFit {
  const fromStart = coldFrom(problem, index, value, startPoint(problem.model), scratch);
  const fromBest = best && index >= 0 ? coldAlong(problem, index, best.phi[index], value, best, scratch) : null;
  const runs = [fromStart, fromBest].filter((r) => r?.ok) as NonNullable<typeof fromBest>[];
  // Where the two starts disagree, or a minimum found has a template clipped that the best fit
  // does not clip (another valley may begin at the kink), the whole path from the best fit is
  // followed in steps of at most 0.1 in the held parameter, each a fresh Newton fit from the
  // previous minimum.
  if (best && index >= 0) {
    const disagree = runs.length < 2 || Math.abs(runs[0].nll - runs[1].nll) > 1e-6 * (1 + Math.abs(runs[0].nll));
    if (disagree || runs.some((r) => newClips(problem, best, r, scratch))) {
      const from = best.phi[index];
      const steps = Math.max(2, Math.ceil(Math.abs(value - from) / 0.1));
      let at: Start = best;
      let path: ReturnType<typeof coldFrom> | null = null;
      for (let k = 1; k <= steps; k++) {
        path = coldAlong(problem, index, from + ((k - 1) / steps) * (value - from), from + (k / steps) * (value - from), at, scratch);
        if (!path.ok) break;
        at = { phi: path.phi, gamma: path.gamma };
      }
      if (path?.ok) runs.push(path);
    }
  }
  // The engine's own conditional minimum as one more start: the profile is the lowest minimum
  // anyone finds, and a minimum the engine reached by following its refits from one value to the
  // next may lie in a basin none of the starts above enters. The reference minimises from there
  // itself, with its own NLL and Newton steps, so the point counts only as the minimum it leads to.
  const viaEngine = engine ? coldFrom(problem, index, value, engine, scratch) : null;
  if (runs.length === 0 && !viaEngine?.ok) return { ok: false, nll: NaN, mu: NaN, decrement: NaN, twoMinima: false, engineLower: false, message: fromStart.message };
  const own = runs.length > 0 ? runs.reduce((a, b) => (b.nll < a.nll ? b : a)) : null;
  const engineLower = !!viaEngine?.ok && (!own || viaEngine.nll < own.nll - 1e-9 * (1 + Math.abs(own.nll)));
  const lowest = engineLower ? viaEngine! : own!;
  const twoMinima = runs.length >= 2 && runs.some((r) => Math.abs(r.nll - own!.nll) > 1e-6 * (1 + Math.abs(own!.nll)));
  return { ok: true, nll: lowest.nll, mu: lowest.phi[0], decrement: lowest.decrement, twoMinima, engineLower, message: null };
}

/** Sample-bins whose template (nominal > 0) is clipped, A ≤ 0, at a point. */
function clippedAt(problem: FitProblem, at: Start, scratch: Scratch): Set<number> {
  const m = problem.model;
  negativeLogLikelihood(m, problem.data, problem.gammaHeld, at.phi, at.gamma, scratch.ws, problem.globals);
  const out = new Set<number>();
  for (let sb = 0; sb < m.nominal.length; sb++) if (m.nominal[sb] > 0 && scratch.ws.A[sb] <= 1e-9 * m.nominal[sb]) out.add(sb);
  return out;
}

/** Whether the minimum `r` clips a template that the best fit does not. */
function newClips(problem: FitProblem, best: Start, r: Start, scratch: Scratch): boolean {
  const before = clippedAt(problem, best, scratch);
  for (const sb of clippedAt(problem, r, scratch)) if (!before.has(sb)) return true;
  return false;
}

/**
 * A batch of cold fits of one model, as a worker receives it: [parameter index, value] pairs
 * (index −1: nothing held), each optionally with the engine's conditional minimum [φ, γ] as one more start.
 */
export interface ColdFitTask {
  key: string;
  model: ExchangeModel;
  fixes: ([number, number] | [number, number, number[], number[]])[];
}

const prepared = new Map<string, { problem: FitProblem; scratch: Scratch; best: Start | null }>();

/** Runs a batch, building the model's problem and its reference best fit once per key (a worker keeps the last few). */
export function runColdFits(task: ColdFitTask): ColdFit[] {
  let entry = prepared.get(task.key);
  if (!entry) {
    const problem = buildProblem(task.model, REFERENCE_PROBLEM);
    const scratch = createScratch(problem);
    const b = coldFrom(problem, -1, 0, startPoint(problem.model), scratch);
    entry = { problem, scratch, best: b.ok ? { phi: b.phi, gamma: b.gamma } : null };
    prepared.set(task.key, entry);
    while (prepared.size > 3) prepared.delete(prepared.keys().next().value!);
  }
  const { problem, scratch, best } = entry;
  return task.fixes.map(([index, value, phi, gamma]) => coldFit(problem, index, value, scratch, best, phi && gamma ? { phi: Float64Array.from(phi), gamma: Float64Array.from(gamma) } : null));
}

/**
 * A check of a minimum that no kink can stop: compass search (Kolda, Lewis & Torczon, SIAM
 * Review 45 (2003) 385, §3) on the NLL itself, with every free μ, k, θ and γ a coordinate, from
 * (φ, γ). Each coordinate is tried a step either way; the steps halve after a sweep without a
 * decrease, from 1e-2 (relative for μ, k and γ) down to 1e-8. Derivative-free, and built on the
 * NLL alone (not the derivatives, the closed-form γ or any minimiser the engine uses), so a
 * minimum on a clip edge that is not one is found lower.
 */
export function compassSearch(problem: FitProblem, phi0: Float64Array, gamma0: Float64Array, maxEvaluations = 200_000): { nll: number; evaluations: number } {
  const m = problem.model;
  const phi = Float64Array.from(phi0);
  const gamma = Float64Array.from(gamma0);
  const scratch = createScratch(problem);
  const f = () => negativeLogLikelihood(m, problem.data, problem.gammaHeld, phi, gamma, scratch.ws, problem.globals);
  type Coordinate = { get: () => number; set: (x: number) => void; lower: number; upper: number; scale: number };
  const coords: Coordinate[] = [];
  for (let i = 0; i < m.nDense; i++) {
    if (problem.held[i]) continue;
    coords.push({ get: () => phi[i], set: (x) => (phi[i] = x), lower: m.lower[i], upper: m.upper[i], scale: i < m.thetaStart ? Math.max(1e-3, Math.abs(phi0[i])) : 1 });
  }
  for (let g = 0; g < m.nGamma; g++) {
    if (problem.gammaHeld[g]) continue;
    coords.push({ get: () => gamma[g], set: (x) => (gamma[g] = x), lower: 0, upper: 10, scale: Math.max(1e-3, gamma0[g]) });
  }
  let best = f();
  let evaluations = 1;
  for (let step = 1e-2; step >= 1e-8 && evaluations < maxEvaluations; ) {
    let improved = false;
    for (const c of coords) {
      const x = c.get();
      for (const sign of [1, -1]) {
        const trial = Math.min(c.upper, Math.max(c.lower, x + sign * step * c.scale));
        if (trial === x) continue;
        c.set(trial);
        const v = f();
        evaluations++;
        if (v < best) {
          best = v;
          improved = true;
          break;
        }
        c.set(x);
      }
    }
    if (!improved) step /= 2;
  }
  return { nll: best, evaluations };
}
