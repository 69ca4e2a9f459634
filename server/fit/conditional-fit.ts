import type { FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import { resolveEdge } from './clip-edge';
import { negativeLogLikelihood } from './likelihood';
import { minimise, type Scratch } from './minimiser';
import { EDGE_TOLERANCE, edgeSampleBins, templateSize } from './newton';
import { evaluateYields } from './yields';
import { startPoint } from './problem';
import { hasSameSide, mirroredStarts, movedBistable } from './basins';
import { outOfBounds, profiledNll, warmRefit } from './warm-refit';

/**
 * A conditional fit: one parameter fixed at a value, all else refitted (impacts, scans, q0,
 * limits, the reference fits of toys). Each fit climbs a ladder until a rung meets the main
 * fit's stop test, the Newton decrement ½gᵀH⁻¹g ≤ tolerance (docs/likelihood.md §10):
 *  1. warm: quasi-Newton from the linear response φ̂ + V[:,i]Δ/V_ii (or the same step from a
 *     nearby conditional minimum when a root search or the pre-fit impact moves the value a
 *     little), with a stop checked on the true Hessian (warm-refit.ts);
 *  2. newton: Newton with bounds and a fresh Hessian from where the first rung stands;
 *  3. cold: Newton with bounds from the context's minimum with the parameter held, and if that
 *     fails too, from the model's start values.
 * An output is left empty only when all three fail.
 */
export type Rung = 'warm' | 'newton' | 'cold';

export interface RefitWork {
  /** Quasi-Newton and checked Newton steps of the warm rung. */
  steps: number;
  normalisationSteps: number;
  /** Gradient evaluations, including the Hessian-vector products of the stop test. */
  gradients: number;
  /** Hessian-vector products of the stop test. */
  products: number;
  /** Iterations of Newton with a fresh Hessian (rungs 2 and 3). */
  newtonIterations: number;
}

export interface ConditionalResult {
  ok: boolean;
  nll: number;
  phi: Float64Array;
  gamma: Float64Array;
  /** The rung that met the stop test, or null when every rung failed. */
  rung: Rung | null;
  /** Newton decrement where the stop test was met (NaN when failed). */
  decrement: number;
  work: RefitWork;
  message: string | null;
}

const MAX_STEPS = 40;

/** A conditional minimum already found for the same parameter, to start a nearby one from. */
export interface WarmStart {
  value: number;
  phi: Float64Array;
  gamma: Float64Array;
}

export function conditionalFit(ctx: FitContext, index: number, value: number, scratch: Scratch, tolerance = 1e-9, warm: WarmStart | null = null): ConditionalResult {
  const { problem, V } = ctx;
  const m = problem.model;
  const P = m.nDense;
  const conditional: FitProblem = { ...problem, held: Uint8Array.from(problem.held) };
  conditional.held[index] = 1;
  const idx = Int32Array.from([...ctx.free].filter((p) => p !== index));
  const n = idx.length;

  // From the minimum, or from a nearby conditional minimum, along V[:,i]: the linear response,
  // or a fraction of it where the whole of it raises F (see linearResponseStart).
  const base = Float64Array.from(warm ? warm.phi : ctx.phi);
  const gamma = Float64Array.from(warm ? warm.gamma : ctx.gamma);
  base[index] = value;
  const Vii = V[index * P + index];
  const delta = value - (warm ? warm.value : ctx.phi[index]);
  const response = new Float64Array(n);
  for (let a = 0; a < n; a++) response[a] = (V[idx[a] * P + index] * delta) / Vii;
  const start = linearResponseStart(ctx, conditional, idx, base, response, gamma, scratch, ctx.nll + ((value - ctx.phi[index]) ** 2) / (2 * Vii));
  return ladder(ctx, conditional, idx, index, value, start.phi, gamma, scratch, tolerance, MAX_STEPS, start.F);
}

/**
 * The start of the warm rung: the base point (φ_i moved to its value) plus the linear response
 * α·r, with α the first of 1, ½, ¼, ⅛ whose point stays in the bounds and has a lower F than
 * the base, else the base itself. The linear response is the exact conditional minimum of the
 * quadratic model; where the likelihood is far from quadratic it can land in the basin of
 * another minimum (same-side variations, clipped templates), and a warm fit from there would
 * settle in that basin. Checking F first keeps the start on the side of the base point. γ is
 * profiled at the chosen point (in place).
 */
function linearResponseStart(
  ctx: FitContext,
  conditional: FitProblem,
  idx: Int32Array,
  base: Float64Array,
  response: Float64Array,
  gamma: Float64Array,
  scratch: Scratch,
  predicted: number,
): { phi: Float64Array; F: number } {
  const trial = new Float64Array(base.length);
  const trialGamma = new Float64Array(gamma.length);
  // F at the base is needed only when the linear response does worse than the quadratic model
  // of the profile predicts, F̂ + Δ²/(2V_ii), which is no more than F at the base in that model.
  let F0 = NaN;
  for (let alpha = 1; alpha >= 0.125; alpha /= 2) {
    trial.set(base);
    for (let a = 0; a < idx.length; a++) trial[idx[a]] += alpha * response[a];
    if (outOfBounds(conditional, trial)) continue;
    trialGamma.set(gamma);
    const F = profiledNll(ctx.problem, trial, trialGamma, scratch);
    if (alpha === 1 && Number.isFinite(F) && F <= predicted) {
      gamma.set(trialGamma);
      return { phi: trial, F };
    }
    if (Number.isNaN(F0)) F0 = profiledNll(ctx.problem, base, Float64Array.from(gamma), scratch);
    if (Number.isFinite(F) && (F < F0 || !Number.isFinite(F0))) {
      gamma.set(trialGamma);
      // The scratch now holds other yields: the warm rung evaluates F here again.
      return { phi: trial, F: NaN };
    }
  }
  return { phi: base, F: NaN };
}

/**
 * A fit of the context's problem with nothing more held, from (φ, γ) near its minimum (a
 * pseudo-experiment drawn around it): the same ladder, with V as the first inverse Hessian.
 */
export function quasiNewtonFit(ctx: FitContext, phi0: Float64Array, gamma0: Float64Array, scratch: Scratch, tolerance = 1e-9, maxSteps = MAX_STEPS): ConditionalResult {
  return ladder(ctx, ctx.problem, ctx.free, -1, NaN, Float64Array.from(phi0), Float64Array.from(gamma0), scratch, tolerance, maxSteps);
}

function ladder(
  ctx: FitContext,
  conditional: FitProblem,
  idx: Int32Array,
  index: number,
  value: number,
  phi: Float64Array,
  gamma: Float64Array,
  scratch: Scratch,
  tolerance: number,
  maxSteps: number,
  startF = NaN,
): ConditionalResult {
  const m = ctx.problem.model;
  // The warm rung moves φ and γ in place; where it started is kept for the fallback below.
  const started = { phi: Float64Array.from(phi), gamma: Float64Array.from(gamma) };
  const w = warmRefit(ctx, conditional, idx, index, phi, gamma, scratch, tolerance, maxSteps, startF);
  const work: RefitWork = { steps: w.steps, normalisationSteps: w.normalisationSteps, gradients: w.gradients, products: w.products, newtonIterations: 0 };
  const newton = (rung: Rung, phi0: Float64Array, gamma0: Float64Array): ConditionalResult | null => {
    const start = Float64Array.from(phi0);
    for (let i = 0; i < m.nDense; i++) start[i] = Math.min(m.upper[i], Math.max(m.lower[i], start[i]));
    if (index >= 0) start[index] = value;
    const r = minimise(conditional, start, gamma0, scratch, { tolerance });
    work.newtonIterations += r.iterations;
    work.gradients += r.iterations + 1;
    if (r.status !== 'converged' && r.status !== 'edge') return null;
    return { ok: true, nll: r.nll, phi: r.phi, gamma: r.gamma, rung, decrement: r.decrement, work, message: r.message };
  };
  // The warm rung again from the context's minimum with only φ_i moved (no linear response), or
  // Newton from there where it fails.
  const warmFromMinimum = (): ConditionalResult | null => {
    const start = Float64Array.from(ctx.phi);
    const g = Float64Array.from(ctx.gamma);
    if (index >= 0) start[index] = value;
    const again = warmRefit(ctx, conditional, idx, index, start, g, scratch, tolerance, maxSteps);
    work.steps += again.steps;
    work.gradients += again.gradients;
    work.products += again.products;
    return again.ok ? { ok: true, nll: again.nll, phi: start, gamma: g, rung: 'cold', decrement: again.decrement, work, message: null } : newton('cold', ctx.phi, ctx.gamma);
  };
  // Continuation from the context's minimum (Nocedal & Wright, §11.3): φ_i moved to the value in
  // steps of at most 0.1 (of σ̂ for μ and the normalisations), each a Newton fit from the previous
  // minimum, so that the minimum is followed into the valley it reaches where a template's yield
  // is clipped, or into the other basin of a same-side parameter, which neither the minimum nor
  // the start values may lie in (the refit-agreement suite's edge models). A step whose start
  // empties a bin with events is halved, down to 1/64 of it. In the checks below: nuisance
  // parameters only, and moves of at most 3 (an impact's refit); μ and the normalisations in
  // steps of 0.1 σ̂ (q0, a crossing, a limit), at most 64 of them, as where every other start
  // has failed.
  const walkFromMinimum = (anyMove = false): ConditionalResult | null => {
    const from = ctx.phi[index];
    if (!anyMove && (index < m.thetaStart || Math.abs(value - from) > 3)) return null;
    const unit = index < m.thetaStart ? Math.sqrt(ctx.V[index * m.nDense + index]) || 1 : 1;
    const steps = Math.min(64, Math.max(2, Math.ceil(Math.abs(value - from) / (0.1 * unit))));
    const stepTo = (at: { phi: Float64Array; gamma: Float64Array }, target: number, last: boolean, depth: number): ReturnType<typeof minimise> | null => {
      const start = Float64Array.from(at.phi);
      const was = start[index];
      start[index] = target;
      // the steps on the way need only follow the valley; the last meets the stop test
      const r = minimise(conditional, start, at.gamma, scratch, { tolerance: last ? tolerance : Math.max(tolerance, 1e-6) });
      work.newtonIterations += r.iterations;
      work.gradients += r.iterations + 1;
      if (r.status === 'converged' || r.status === 'edge') return r;
      if (depth >= 6 || r.iterations > 0) return null;
      const half = stepTo(at, (was + target) / 2, false, depth + 1);
      return half ? stepTo({ phi: half.phi, gamma: half.gamma }, target, last, depth + 1) : null;
    };
    let at: { phi: Float64Array; gamma: Float64Array } = { phi: Float64Array.from(ctx.phi), gamma: Float64Array.from(ctx.gamma) };
    let last: ConditionalResult | null = null;
    for (let k = 1; k <= steps; k++) {
      const r = stepTo(at, k === steps ? value : from + (k / steps) * (value - from), k === steps, 0);
      if (!r) return null;
      at = { phi: r.phi, gamma: r.gamma };
      if (k === steps) last = { ok: true, nll: r.nll, phi: r.phi, gamma: r.gamma, rung: 'cold', decrement: r.decrement, work, message: r.message };
    }
    return last;
  };
  // Where the model has same-side effects, the minimum found may sit in one of two basins of
  // such a parameter; the other is looked for (basins.ts) and the lower NLL kept.
  const lower = (a: ConditionalResult, b: ConditionalResult | null) => (b && b.nll < a.nll - 1e-12 * (1 + Math.abs(a.nll)) ? b : a);
  const checked = (r: ConditionalResult): ConditionalResult => {
    if (index < 0) return r;
    let best = r;
    // Newton from the model's start values with φ_i held: the start of the cold fit the result is
    // checked against, and the one symmetric start between the basins of a same-side parameter.
    let triedStart = false;
    // Newton from the context's minimum with φ_i held: tried once at most (the same start gives the same minimum).
    let triedMinimum = false;
    const fromMinimum = () => {
      triedMinimum = true;
      return newton('cold', ctx.phi, ctx.gamma);
    };
    const fromStartValues = () => {
      triedStart = true;
      const s = startPoint(m);
      return newton('cold', s.phi, s.gamma);
    };
    // A same-side parameter moved far, or a template that the refit took across the clip edge
    // (clipped at the refit's minimum, not at the context's): the path from φ̂ may have followed
    // one basin while another, lower one exists. Both other starts are tried.
    const moved = movedBistable(ctx, r.phi);
    const crossed = !moved && newlyClipped(ctx, r.phi, r.gamma, scratch);
    if (moved || crossed) {
      best = lower(best, warmFromMinimum());
      best = lower(best, fromStartValues());
      best = lower(best, walkFromMinimum(index < m.thetaStart));
    } else if (hasSameSide(m)) {
      // A model with same-side effects can have a lower conditional minimum in a basin that
      // neither the path from φ̂ nor the linear response enters, though no parameter moved far:
      // the two cold starts of the reference, Newton from φ̂ with φ_i moved and from the start
      // values, are tried as well.
      best = lower(best, fromMinimum());
      best = lower(best, fromStartValues());
    }
    // A q far above the quadratic model's, Δ²/V_ii, is the mark of a minimum in another basin
    // (a template taken across the clip edge, say): Newton from the minimum is tried as well.
    // Only within 3σ: further out (q0, limits) the quadratic model is no yardstick.
    const predicted = (value - ctx.phi[index]) ** 2 / ctx.V[index * m.nDense + index];
    const suspicious = () => predicted <= 9 && 2 * (best.nll - ctx.nll) > 2 * predicted + 1;
    if (!triedMinimum && suspicious()) best = lower(best, fromMinimum());
    // Where the context's minimum holds a clip edge, any move takes those templates off it, to
    // one side or the other, while the conditional minimum may hold the edge again: the edge
    // is held from the refit's point (clip-edge.ts) and the lower NLL kept.
    const edge = contextEdge(ctx, scratch);
    if (edge.length > 0) {
      const e = resolveEdge(conditional, { status: 'edge', phi: best.phi, gamma: best.gamma, nll: best.nll, iterations: 0, decrement: best.decrement, damped: false, message: null, edgeBins: edge }, scratch, { tolerance });
      work.newtonIterations += e.iterations;
      if (e.status === 'edge' || e.status === 'converged') best = lower(best, { ...best, nll: e.nll, phi: e.phi, gamma: e.gamma, decrement: e.decrement });
    }
    // Still far above the quadratic model: the fit from the model's start values too.
    if (!triedStart && suspicious()) best = lower(best, fromStartValues());
    // A refit that ends with a template at the clip edge may have stopped at the kink short of
    // the minimum (the edge's stop test is looser than the decrement's): Newton again from where
    // it stands, while that lowers the NLL (the refit-agreement suite's edge models).
    for (let round = 0; round < 3 && clipSides(conditional, best.phi, best.gamma, scratch); round++) {
      const again = newton(best.rung ?? 'newton', best.phi, best.gamma);
      if (!again || !(again.nll < best.nll - 1e-12 * (1 + Math.abs(best.nll)))) break;
      best = again;
    }
    for (const start of mirroredStarts(ctx, conditional, index, best.phi, best.gamma, best.nll, scratch).slice(0, 2)) {
      const again = warmRefit(ctx, conditional, idx, index, start.phi, start.gamma, scratch, tolerance, maxSteps);
      work.steps += again.steps;
      work.gradients += again.gradients;
      work.products += again.products;
      const found = again.ok ? { ...best, nll: again.nll, phi: start.phi, gamma: start.gamma, decrement: again.decrement } : newton(best.rung ?? 'newton', start.phi, start.gamma);
      const kept = lower(best, found);
      // A mirrored start that leads lower is polished by Newton from where its warm steps stopped:
      // between the basins of a same-side parameter those can stop at a kink short of the minimum.
      best = kept !== best && again.ok ? lower(kept, newton(best.rung ?? 'newton', kept.phi, kept.gamma)) : kept;
    }
    return best;
  };
  if (w.ok) return checked({ ok: true, nll: w.nll, phi, gamma, rung: 'warm', decrement: w.decrement, work, message: null });

  const fromHere = newton('newton', phi, gamma);
  if (fromHere) return checked(fromHere);
  // Newton from where the warm rung started as well as from the context's minimum, keeping the
  // lower: in a root search or a scan the start is the neighbouring conditional minimum, whose
  // basin can be lower than the one the minimum leads to (a same-side parameter, a clipped
  // template), and a fallback to the minimum alone would jump from one basin to the other
  // between neighbouring values (the refit-agreement suite's edge models).
  const fromStarted = newton('newton', started.phi, started.gamma);
  const fromMinimum = newton('cold', ctx.phi, ctx.gamma);
  if (fromStarted || fromMinimum) return fromStarted && fromMinimum ? lower(fromMinimum, fromStarted) : (fromStarted ?? fromMinimum)!;
  // Every start near the minimum empties a bin with events (the parameter moved alone): the
  // minimum is followed to the value, and the start values tried too, keeping the lower.
  const s = startPoint(m);
  const fromStart = newton('cold', s.phi, s.gamma);
  const walked = index >= 0 ? walkFromMinimum(true) : null;
  if (fromStart || walked) return fromStart && walked ? lower(fromStart, walked) : (fromStart ?? walked)!;
  return { ok: false, nll: NaN, phi, gamma, rung: null, decrement: NaN, work, message: `no rung converged (warm: ${w.message ?? 'failed'})` };
}

/** Whether each sample-bin that shape effects can move sits on or past the clip edge at a point (A ≤ EDGE_TOLERANCE × its size). */
function clipSides(problem: FitProblem, phi: Float64Array, gamma: Float64Array, scratch: Scratch): Uint8Array | null {
  const m = problem.model;
  evaluateYields(m, phi, gamma, scratch.ws);
  let out: Uint8Array | null = null;
  for (let s = 0; s < m.nSamples; s++) {
    if (!m.sampleInFit[s] || m.shapePtr[s] === m.shapePtr[s + 1]) continue;
    const sb0 = m.sampleBinStart[s];
    for (let j = 0; j < m.sampleNBins[s]; j++) {
      const size = templateSize(m, s, j);
      if (size > 0 && scratch.ws.A[sb0 + j] <= EDGE_TOLERANCE * size) (out ??= new Uint8Array(m.nominal.length))[sb0 + j] = 1;
    }
  }
  return out;
}

/** The clipped sample-bins at a context's minimum (null for none), once per context. */
const contextClips = new WeakMap<FitContext, { sides: Uint8Array | null }>();

/**
 * A template clipped at (φ, γ) that is not clipped at the context's minimum: the refit crossed
 * the clip edge, where the NLL has a kink and the basin of another minimum may begin (the
 * template's yield held at zero over a stretch of θ makes a valley of its own). A model
 * without shape effects, or whose templates stay clear of the edge, never triggers it.
 */
function newlyClipped(ctx: FitContext, phi: Float64Array, gamma: Float64Array, scratch: Scratch): boolean {
  const m = ctx.problem.model;
  if (m.shapePtr[m.nSamples] === 0) return false;
  let known = contextClips.get(ctx);
  if (!known) {
    known = { sides: clipSides(ctx.problem, ctx.phi, ctx.gamma, scratch) };
    contextClips.set(ctx, known);
  }
  const here = clipSides(ctx.problem, phi, gamma, scratch);
  if (!here) return false;
  for (let k = 0; k < here.length; k++) if (here[k] && !known.sides?.[k]) return true;
  return false;
}

/** The templates on the clip edge at a context's minimum (none for most), once per context. */
const contextEdges = new WeakMap<FitContext, { sample: number; bin: number }[]>();
function contextEdge(ctx: FitContext, scratch: Scratch): { sample: number; bin: number }[] {
  let bins = contextEdges.get(ctx);
  if (!bins) {
    const p = ctx.problem;
    negativeLogLikelihood(p.model, p.data, p.gammaHeld, ctx.phi, ctx.gamma, scratch.ws, p.globals);
    bins = edgeSampleBins(p, scratch.ws);
    contextEdges.set(ctx, bins);
  }
  return bins;
}
