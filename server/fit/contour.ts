import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptionsInput, ProfileContour } from '@shared/schemas/fit';
import type { FitProblem } from './compiled-model';
import type { FitContext } from './covariance';
import { chiSquareQuantile } from './distributions';
import { FitInputError, throwIfAborted } from './errors';
import { createScratch, minimise } from './minimiser';
import { bestFitFor } from './parameter-scan';

/**
 * Profile-likelihood contour of two parameters: q(a, b) = 2[NLL(a, b held, others refitted) −
 * NLL_min] on a grid of the minimum ± 3σ of each (within the bounds), and its lines at the χ²₂
 * quantiles 2.30 (68.27 %) and 5.99 (95 %) (Wilks; PDG Review of Particle Physics, Statistics
 * chapter, table of Δχ² for two parameters) by marching squares with linear interpolation.
 * Each grid point is a Newton fit with both held, started from the converged neighbour before it;
 * a point whose fit fails is left out (null) and counted, and no line crosses its cells.
 */
export const CONTOUR_LEVELS = [0.6827, 0.95].map((cl) => ({ cl, q: chiSquareQuantile(cl, 2) }));

export interface ContourControl {
  /** Grid points per parameter (default 21). */
  points?: number;
  signal?: AbortSignal;
}

export function profileContour(model: ExchangeModel, optionsInput: FitOptionsInput, a: string, b: string, control: ContourControl = {}): ProfileContour {
  const best = bestFitFor(model, optionsInput, a, () => true);
  if (best.kind === 'unknown') throw new FitInputError(`unknown parameter "${a}"`, ['a']);
  const ib = best.m.names.indexOf(b);
  if (ib < 0) throw new FitInputError(`unknown parameter "${b}"`, ['b']);
  if (ib === best.index) throw new FitInputError(`the two parameters of a contour must differ ("${a}" twice)`, ['b']);
  const n = Math.max(3, control.points ?? 21);
  const empty = (failure: string) => noContour([a, b], [best.m.start[best.index], best.m.start[ib]], failure);
  if (best.kind === 'none') return empty(best.failure);
  if (best.ctx.problem.held[ib]) return empty(`${b} is held in this fit`);
  return contourAround(best.ctx, best.index, ib, n, control.signal);
}

/**
 * The contour of the parameters named `pair` around a fit's own minimum (the fit's held
 * parameters stay held). A pair the model does not have, or a held one, gives a contour with a
 * failure and no grid.
 */
export function contourOf(ctx: FitContext, pair: [string, string], control: ContourControl = {}): ProfileContour {
  const m = ctx.problem.model;
  const [ia, ib] = pair.map((name) => m.names.indexOf(name));
  const failure = (why: string) => noContour(pair, [ia >= 0 ? ctx.phi[ia] : 0, ib >= 0 ? ctx.phi[ib] : 0], why);
  if (ia < 0 || ib < 0) return failure(`the model has no parameter "${ia < 0 ? pair[0] : pair[1]}"`);
  if (ia === ib) return failure('the two parameters of a contour must differ');
  for (const i of [ia, ib]) if (ctx.problem.held[i]) return failure(`${m.names[i]} is held in this fit`);
  return contourAround(ctx, ia, ib, Math.max(3, control.points ?? 21), control.signal);
}

/** A contour that could not be made: why, and no grid. */
function noContour(pair: [string, string], bestFit: [number, number], failure: string): ProfileContour {
  return { parameters: pair, failure, bestFit, errors: [null, null], a: [], b: [], q: [], levels: CONTOUR_LEVELS.map((l) => ({ ...l, lines: [] })), points: { converged: 0, failed: 0 } };
}

function contourAround(ctx: FitContext, ia: number, ib: number, n: number, signal: AbortSignal | undefined): ProfileContour {
  const m = ctx.problem.model;
  const [a, b] = [m.names[ia], m.names[ib]];
  const P = m.nDense;
  const axis = (i: number) => {
    const x0 = ctx.phi[i];
    const sigma = Math.sqrt(ctx.V[i * P + i]);
    const lo = Math.max(m.lower[i], x0 - 3 * sigma);
    const hi = Math.min(m.upper[i], x0 + 3 * sigma);
    return { sigma, grid: Array.from({ length: n }, (_, k) => lo + ((hi - lo) * k) / (n - 1)) };
  };
  const [ax, bx] = [axis(ia), axis(ib)];
  const problem: FitProblem = { ...ctx.problem, held: Uint8Array.from(ctx.problem.held) };
  problem.held[ia] = 1;
  problem.held[ib] = 1;
  const scratch = createScratch(problem);
  const q: (number | null)[][] = [];
  const minima: ({ phi: Float64Array; gamma: Float64Array } | null)[][] = [];
  let failed = 0;
  for (let j = 0; j < n; j++) {
    throwIfAborted(signal);
    const row: (number | null)[] = [];
    const rowMinima: ({ phi: Float64Array; gamma: Float64Array } | null)[] = [];
    for (let i = 0; i < n; i++) {
      const from = rowMinima[i - 1] ?? minima[j - 1]?.[i] ?? { phi: ctx.phi, gamma: ctx.gamma };
      const phi = Float64Array.from(from.phi);
      phi[ia] = ax.grid[i];
      phi[ib] = bx.grid[j];
      let r = minimise(problem, phi, Float64Array.from(from.gamma), scratch);
      if (r.status === 'failed' && from.phi !== ctx.phi) {
        const again = Float64Array.from(ctx.phi);
        again[ia] = ax.grid[i];
        again[ib] = bx.grid[j];
        r = minimise(problem, again, Float64Array.from(ctx.gamma), scratch);
      }
      if (r.status === 'cancelled') throwIfAborted(signal);
      const ok = r.status !== 'failed' && r.status !== 'cancelled' && Number.isFinite(r.nll);
      if (!ok) failed++;
      row.push(ok ? Math.max(0, 2 * (r.nll - ctx.nll)) : null);
      rowMinima.push(ok ? { phi: Float64Array.from(r.phi), gamma: Float64Array.from(r.gamma) } : null);
    }
    q.push(row);
    minima.push(rowMinima);
  }
  return {
    parameters: [a, b],
    failure: null,
    bestFit: [ctx.phi[ia], ctx.phi[ib]],
    errors: [ax.sigma, bx.sigma],
    a: ax.grid,
    b: bx.grid,
    q,
    levels: CONTOUR_LEVELS.map((l) => ({ ...l, lines: contourLines(ax.grid, bx.grid, q, l.q) })),
    points: { converged: n * n - failed, failed },
  };
}

type Point = [number, number];

/**
 * Marching squares: the lines where the field z (z[j][i] at (x_i, y_j)) equals level, each crossing
 * of a cell edge placed by linear interpolation, the two saddle cases decided by the mean of the
 * four corners. Cells with a missing corner are skipped. Segments are joined into polylines
 * through the edges they share; a closed line ends on its first point.
 */
export function contourLines(x: number[], y: number[], z: (number | null)[][], level: number): Point[][] {
  const nx = x.length;
  const ny = y.length;
  // Edge ids: horizontal edge (i, j)–(i+1, j) is j·nx + i; vertical edge (i, j)–(i, j+1) is nx·ny + j·nx + i.
  const h = (i: number, j: number) => j * nx + i;
  const v = (i: number, j: number) => nx * ny + j * nx + i;
  const at = (e: number): Point => {
    const vertical = e >= nx * ny;
    const k = vertical ? e - nx * ny : e;
    const i = k % nx;
    const j = Math.floor(k / nx);
    const [i2, j2] = vertical ? [i, j + 1] : [i + 1, j];
    const z1 = z[j][i]!;
    const z2 = z[j2][i2]!;
    const t = z2 === z1 ? 0.5 : (level - z1) / (z2 - z1);
    return [x[i] + t * (x[i2] - x[i]), y[j] + t * (y[j2] - y[j])];
  };
  const segments: [number, number][] = [];
  for (let j = 0; j + 1 < ny; j++) {
    for (let i = 0; i + 1 < nx; i++) {
      const c = [z[j][i], z[j][i + 1], z[j + 1][i + 1], z[j + 1][i]];
      if (c.some((value) => value === null)) continue;
      const above = c.map((value) => (value! >= level ? 1 : 0));
      const code = above[0] | (above[1] << 1) | (above[2] << 2) | (above[3] << 3);
      if (code === 0 || code === 15) continue;
      // edges: bottom, right, top, left
      const [bottom, right, top, left] = [h(i, j), v(i + 1, j), h(i, j + 1), v(i, j)];
      const centreAbove = (c[0]! + c[1]! + c[2]! + c[3]!) / 4 >= level;
      const pairs: Record<number, [number, number][]> = {
        1: [[left, bottom]],
        2: [[bottom, right]],
        3: [[left, right]],
        4: [[right, top]],
        5: centreAbove ? [[left, top], [bottom, right]] : [[left, bottom], [right, top]],
        6: [[bottom, top]],
        7: [[left, top]],
        8: [[top, left]],
        9: [[top, bottom]],
        10: centreAbove ? [[bottom, left], [top, right]] : [[bottom, right], [top, left]],
        11: [[top, right]],
        12: [[right, left]],
        13: [[right, bottom]],
        14: [[bottom, left]],
      };
      segments.push(...pairs[code]);
    }
  }
  // Join: every edge carries at most two segment ends.
  const ends = new Map<number, number[]>();
  segments.forEach(([e1, e2], s) => {
    for (const e of [e1, e2]) ends.set(e, [...(ends.get(e) ?? []), s]);
  });
  const used = new Uint8Array(segments.length);
  const follow = (edge: number, from: number, chain: number[]) => {
    let e = edge;
    let s = from;
    for (;;) {
      const next = (ends.get(e) ?? []).find((k) => k !== s && !used[k]);
      if (next === undefined) return;
      used[next] = 1;
      e = segments[next][0] === e ? segments[next][1] : segments[next][0];
      s = next;
      chain.push(e);
    }
  };
  const lines: Point[][] = [];
  for (let s = 0; s < segments.length; s++) {
    if (used[s]) continue;
    used[s] = 1;
    const forward: number[] = [segments[s][1]];
    follow(segments[s][1], s, forward);
    const backward: number[] = [];
    if (forward[forward.length - 1] !== segments[s][0]) follow(segments[s][0], s, backward);
    const chain = [...backward.reverse(), segments[s][0], ...forward];
    lines.push(chain.map(at));
  }
  return lines;
}
