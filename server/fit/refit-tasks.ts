import { clsValue, expectedLimitFactor } from './cls';
import { conditionalFit, type ConditionalResult, type RefitWork, type WarmStart } from './conditional-fit';
import type { FitContext } from './covariance';
import { createScratch, type Scratch } from './minimiser';

/**
 * The independent refits of a fit, as plain data so they can run in this thread or on a
 * worker: each task names the context (a minimum with its covariance) it starts from. A task
 * depends on nothing but its context, so the serial and parallel paths give the same numbers.
 */
export type RefitTask =
  /**
   * φ_index fixed at value: returns the NLL and μ of the conditional minimum. With `next`, the
   * same parameter is then fixed at that value too, starting from the first conditional minimum
   * (post- and pre-fit impacts of one direction: θ̂ + σ̂ and θ̂ + 1 are close).
   */
  | { kind: 'fix'; context: number; index: number; value: number; next?: number; keepPoint?: boolean }
  /** Where 2ΔNLL = level on one side of the minimum (null past the bound). */
  | { kind: 'crossing'; context: number; index: number; level: number; direction: 1 | -1; keepPoint?: boolean }
  /** Expected CLs limit at N σ of the background-only distribution (Asimov context). */
  | { kind: 'expected-limit'; context: number; n: number; cl: number }
  /** Observed CLs limit (observed context, background-only Asimov context). */
  | { kind: 'observed-limit'; context: number; asimov: number; cl: number };

/** Conditional fits of a task by the rung of the ladder that met the stop test, and those where every rung failed. */
export interface RefitCounts {
  warm: number;
  newton: number;
  cold: number;
  failed: number;
}

export function noRefits(): RefitCounts {
  return { warm: 0, newton: 0, cold: 0, failed: 0 };
}

export function addRefits(into: RefitCounts, from: RefitCounts): RefitCounts {
  into.warm += from.warm;
  into.newton += from.newton;
  into.cold += from.cold;
  into.failed += from.failed;
  return into;
}

export interface RefitResult {
  ok: boolean;
  value: number | null;
  nll: number | null;
  mu: number | null;
  message: string | null;
  /** The conditional fits this task ran (for a 'fix' task with `next`, the first value only). */
  refits: RefitCounts;
  /** Work done by a 'fix' refit (absent when the value is the minimum itself). */
  work?: RefitWork & { rung: ConditionalResult['rung'] };
  /** The result at the task's `next` value. */
  next?: RefitResult;
  /**
   * For a 'fix' task on a model with parameters of interest besides μ: the value of every one
   * (μ first, in the model's order) at the conditional minimum, so that the same refits give the
   * impacts on each (docs/likelihood.md, "Several parameters of interest").
   */
  pois?: number[];
  /**
   * With `keepPoint`: the conditional minimum the result comes from (for a crossing, the last
   * one the root search found, at a value within its tolerance of the root). For checks that
   * re-minimise from it (the refit-agreement suite); not kept otherwise.
   */
  point?: ConditionalPoint;
}

export interface ConditionalPoint {
  value: number;
  phi: number[];
  gamma: number[];
}

const pointOf = (w: WarmStart | null | undefined): ConditionalPoint | undefined => (w ? { value: w.value, phi: Array.from(w.phi), gamma: Array.from(w.gamma) } : undefined);

export class Refitter {
  private scratch = new Map<number, Scratch>();
  /** `scratchOf` lets a worker keep one scratch per context across batches. */
  constructor(
    private readonly contexts: FitContext[],
    private readonly scratchOf: (ctx: FitContext) => Scratch = (ctx) => createScratch(ctx.problem),
  ) {}

  private scratchFor(c: number): Scratch {
    let s = this.scratch.get(c);
    if (!s) {
      s = this.scratchOf(this.contexts[c]);
      this.scratch.set(c, s);
    }
    return s;
  }

  /**
   * Within one task, the last conditional minimum per context warm-starts the next fit of a
   * root search. It is cleared between tasks, so a task's result does not depend on which tasks
   * ran before it on the same thread (serial and parallel paths agree exactly).
   */
  private warm = new Map<number, WarmStart>();
  /** Conditional fits of the task being run. */
  private counts = noRefits();
  /** Per context, the indices of the parameters of interest when there are several (else null). */
  private poiIndices = new Map<number, number[] | null>();

  private poisAt(c: number, phi: ArrayLike<number>): number[] | undefined {
    let indices = this.poiIndices.get(c);
    if (indices === undefined) {
      const kinds = this.contexts[c].problem.model.kinds;
      const found = kinds.flatMap((kind, i) => (kind === 'poi' ? [i] : []));
      indices = found.length > 1 ? found : null;
      this.poiIndices.set(c, indices);
    }
    return indices ? indices.map((i) => phi[i]) : undefined;
  }

  /** One conditional fit, counted by its rung. */
  private refit(c: number, index: number, value: number, warm: WarmStart | null): ConditionalResult {
    const r = conditionalFit(this.contexts[c], index, value, this.scratchFor(c), TOLERANCE, warm);
    if (r.rung) this.counts[r.rung]++;
    else this.counts.failed++;
    return r;
  }

  /** 2ΔNLL with φ_index fixed at value (null if the conditional fit failed). */
  private q(c: number, index: number, value: number): number | null {
    const ctx = this.contexts[c];
    if (value === ctx.phi[index]) return 0;
    const r = this.refit(c, index, value, this.warm.get(c) ?? null);
    if (!r.ok) return null;
    this.warm.set(c, { value, phi: r.phi, gamma: r.gamma });
    return Math.max(0, 2 * (r.nll - ctx.nll));
  }

  run(task: RefitTask): RefitResult {
    this.warm.clear();
    this.counts = noRefits();
    const result = this.dispatch(task);
    return { ...result, refits: this.counts };
  }

  private dispatch(task: RefitTask): Omit<RefitResult, 'refits'> {
    switch (task.kind) {
      case 'fix': {
        const first = this.fix(task.context, task.index, task.value, null);
        const firstResult = task.keepPoint ? { ...first.result, point: pointOf(first.warm) } : first.result;
        if (task.next === undefined) return firstResult;
        const counts = this.counts;
        this.counts = noRefits();
        const next = this.fix(task.context, task.index, task.next, first.warm);
        const nextResult = { ...next.result, refits: this.counts, ...(task.keepPoint ? { point: pointOf(next.warm) } : {}) };
        this.counts = counts;
        return { ...firstResult, next: nextResult };
      }
      case 'crossing': {
        const result = this.crossing(task.context, task.index, task.level, task.direction);
        return task.keepPoint ? { ...result, point: pointOf(this.warm.get(task.context)) } : result;
      }
      case 'expected-limit':
        return this.expectedLimit(task.context, task.n, task.cl);
      case 'observed-limit':
        return this.observedLimit(task.context, task.asimov, task.cl);
    }
  }

  /** One conditional fit with φ_index = value, optionally from a nearby conditional minimum. */
  private fix(c: number, index: number, value: number, warm: WarmStart | null): { result: Omit<RefitResult, 'refits'>; warm: WarmStart | null } {
    const ctx = this.contexts[c];
    const pois = (phi: ArrayLike<number>) => {
      const values = this.poisAt(c, phi);
      return values ? { pois: values } : {};
    };
    if (value === ctx.phi[index]) return { result: { ok: true, value, nll: ctx.nll, mu: ctx.phi[0], message: null, ...pois(ctx.phi) }, warm: null };
    const r = this.refit(c, index, value, warm);
    const work = { ...r.work, rung: r.rung };
    if (!r.ok) return { result: { ...failed(r.message), work }, warm: null };
    return { result: { ok: true, value, nll: r.nll, mu: r.phi[0], message: r.message, work, ...pois(r.phi) }, warm: { value, phi: r.phi, gamma: r.gamma } };
  }

  /**
   * Bracket, then solve √q(x) = √level by the Illinois variant of regula falsi (√q is close to
   * linear in x, so few conditional fits are needed; Dowell & Jarratt, BIT 11 (1971) 168).
   */
  private crossing(c: number, index: number, level: number, dir: 1 | -1): Omit<RefitResult, 'refits'> {
    const ctx = this.contexts[c];
    const m = ctx.problem.model;
    const P = m.nDense;
    const x0 = ctx.phi[index];
    const sigma = Math.sqrt(ctx.V[index * P + index]);
    const bound = dir > 0 ? m.upper[index] : m.lower[index];
    const target = Math.sqrt(level);
    const f = (x: number): number | null => {
      const q = this.q(c, index, x);
      return q === null ? null : Math.sqrt(q) - target;
    };
    let lo = x0;
    let flo = -target;
    let dist = sigma * target;
    let hi = clampTo(x0 + dir * dist, x0, bound);
    let fhi = f(hi);
    for (let k = 0; fhi !== null && fhi < 0; k++) {
      if (hi === bound || k > 30) return { ok: true, value: null, nll: null, mu: null, message: `no crossing of ${level} before the bound ${bound}` };
      lo = hi;
      flo = fhi;
      dist *= 1.6;
      hi = clampTo(x0 + dir * dist, x0, bound);
      fhi = f(hi);
    }
    if (fhi === null) return failed('a conditional fit failed while bracketing the crossing');
    const root = illinois(f, lo, flo, hi, fhi, 1e-6 * Math.max(sigma, 1e-12));
    return root === null ? failed('a conditional fit failed while locating the crossing') : { ok: true, value: root, nll: null, mu: null, message: null };
  }

  /** μ = σ_A(μ) K with σ_A(μ)² = μ²/q_μ,A on the background-only Asimov dataset, by fixed-point iteration. */
  private expectedLimit(c: number, n: number, cl: number): Omit<RefitResult, 'refits'> {
    const ctx = this.contexts[c];
    const m = ctx.problem.model;
    const K = expectedLimitFactor(n, 1 - cl);
    let mu = Math.sqrt(ctx.V[0]) * K + ctx.phi[0];
    for (let it = 0; it < 40; it++) {
      if (!(mu > ctx.phi[0]) || mu > m.upper[0]) return { ok: true, value: null, nll: null, mu: null, message: 'the expected limit lies beyond the upper bound of μ' };
      const qa = this.q(c, 0, mu);
      if (qa === null || !(qa > 0)) return failed('a conditional fit on the Asimov dataset failed');
      const sigma = (mu - ctx.phi[0]) / Math.sqrt(qa);
      const next = ctx.phi[0] + sigma * K;
      if (Math.abs(next - mu) < 1e-7 * sigma) return { ok: true, value: next, nll: null, mu: null, message: null };
      mu = next;
    }
    return failed('the expected limit did not settle');
  }

  /** Solves CLs(μ) = 1 − cl for μ above max(μ̂, 0). */
  private observedLimit(c: number, a: number, cl: number): Omit<RefitResult, 'refits'> {
    const ctx = this.contexts[c];
    const asimov = this.contexts[a];
    const m = ctx.problem.model;
    const alpha = 1 - cl;
    const muHat = ctx.phi[0];
    // q̃_μ uses μ = 0 as the reference when μ̂ < 0.
    let reference = 0;
    if (muHat < 0) {
      const q0 = this.q(c, 0, 0);
      if (q0 === null) return failed('the conditional fit at μ = 0 failed');
      reference = q0;
    }
    const cls = (mu: number): number | null => {
      const q = this.q(c, 0, mu);
      const qa = this.q(a, 0, mu);
      if (q === null || qa === null) return null;
      const qTilde = muHat > mu ? 0 : q - reference;
      return clsValue(qTilde, qa);
    };
    const sigma = Math.sqrt(ctx.V[0]);
    let lo = Math.max(muHat, 0, asimov.phi[0]);
    let flo = 1 - alpha;
    let step = 2 * sigma;
    let hi = Math.min(m.upper[0], lo + step);
    let chi = cls(hi);
    for (let k = 0; chi !== null && chi > alpha; k++) {
      if (hi >= m.upper[0] || k > 30) return { ok: true, value: null, nll: null, mu: null, message: 'the observed limit lies beyond the upper bound of μ' };
      lo = hi;
      flo = chi - alpha;
      step *= 2;
      hi = Math.min(m.upper[0], lo + step);
      chi = cls(hi);
    }
    if (chi === null) return failed('a conditional fit failed while bracketing the limit');
    const g = (mu: number) => {
      const v = cls(mu);
      return v === null ? null : v - alpha;
    };
    const root = illinois(g, lo, flo, hi, chi - alpha, 1e-6 * sigma);
    return root === null ? failed('a conditional fit failed while locating the limit') : { ok: true, value: root, nll: null, mu: null, message: null };
  }
}

/** The stop test of every refit: the main fit's (docs/likelihood.md §5, §10). */
const TOLERANCE = 1e-9;

function failed(message: string | null): Omit<RefitResult, 'refits'> {
  return { ok: false, value: null, nll: null, mu: null, message };
}

function clampTo(x: number, from: number, bound: number): number {
  return bound > from ? Math.min(x, bound) : Math.max(x, bound);
}

/** Root of f in [a, b] with f(a), f(b) of opposite signs (Illinois regula falsi). */
function illinois(f: (x: number) => number | null, a: number, fa: number, b: number, fb: number, xtol: number): number | null {
  if (fa === 0) return a;
  if (fb === 0) return b;
  let side = 0;
  let previous = Infinity;
  for (let it = 0; it < 100; it++) {
    const x = (a * fb - b * fa) / (fb - fa);
    const fx = f(x);
    if (fx === null) return null;
    if (fx === 0 || Math.abs(b - a) < xtol || Math.abs(x - previous) < xtol) return x;
    previous = x;
    if (Math.sign(fx) === Math.sign(fb)) {
      b = x;
      fb = fx;
      if (side === -1) fa /= 2;
      side = -1;
    } else {
      a = x;
      fa = fx;
      if (side === 1) fb /= 2;
      side = 1;
    }
    if (Math.abs(fx) < 1e-10) return x;
  }
  return (a + b) / 2;
}
