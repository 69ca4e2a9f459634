import type { CompiledModel, GlobalObservables } from './compiled-model';
import { applyGammas, evaluateYields, type Workspace } from './yields';

/**
 * γ profiled in closed form (Conway, arXiv:1103.0354, Barlow–Beeston lite): in bin b, with m
 * the yield of the templates carrying a variance (at γ = 1), o the rest, n the count and σ the
 * relative width and g the centre of the constraint (γ − g)²/(2σ²) (1 unless a pseudo-experiment
 * moved it), ∂NLL/∂γ = m − n m/(m γ + o) + (γ − g)/σ² = 0 is, times (m γ + o) σ², the quadratic
 *   m γ² + (o − g m + m² σ²) γ + (m σ² (o − n) − g o) = 0.
 * The NLL is strictly convex in γ where the bin's yield m γ + o is positive (its second
 * derivative is n m²/(m γ + o)² + 1/σ²), so its minimum over [0, 10] is the root on that side,
 * clipped to the bounds:
 *  - m > 0 (the usual case): the larger root;
 *  - m < 0 (a signal template carrying the variance while μ < 0): the root where m γ + o > 0;
 *  - n = 0: the Poisson term is the yield m γ + o itself, whatever its sign (likelihood.ts), so
 *    the NLL is a parabola in γ with its minimum at g − m σ², clipped to the bounds (for m > 0
 *    and o ≥ 0 the larger root again);
 *  - m = 0: γ does not change the yield and the constraint alone decides: γ = g.
 */
export function gammaRoot(m: number, o: number, n: number, sigma: number, centre = 1): number {
  if (m === 0 || !Number.isFinite(m)) return clipGamma(centre, 10, centre);
  const s2 = sigma * sigma;
  if (n === 0) return clipGamma(centre - m * s2, 10, centre);
  const b = o - centre * m + m * m * s2;
  const c = m * s2 * (o - n) - centre * o;
  const disc = Math.max(0, b * b - 4 * m * c);
  if (m > 0) return clipGamma(b >= 0 ? (2 * c) / (-b - Math.sqrt(disc)) : (-b + Math.sqrt(disc)) / (2 * m), 10, centre);
  // Both roots without cancellation (Numerical Recipes, 3rd ed., §5.6); the one with a positive yield.
  const q = -0.5 * (b + (b >= 0 ? 1 : -1) * Math.sqrt(disc));
  const r1 = q / m;
  const r2 = q !== 0 ? c / q : r1;
  return clipGamma(m * r1 + o > 0 ? r1 : r2, Math.min(10, (o / -m) * (1 - 1e-12)), centre);
}

/** x clipped to [0, hi]; the centre when x is not finite. A plain function: this runs once per γ per evaluation. */
function clipGamma(x: number, hi: number, centre: number): number {
  const v = Number.isFinite(x) ? x : centre;
  return v < 0 ? 0 : v > hi ? hi : v;
}

/** Sets every free γ to its conditional minimum at φ and refreshes the yields in the workspace. */
export function profileGammas(
  model: CompiledModel,
  data: Float64Array,
  gammaHeld: Uint8Array,
  phi: Float64Array,
  gamma: Float64Array,
  ws: Workspace,
  globals?: GlobalObservables,
): void {
  evaluateYields(model, phi, gamma, ws, false, false);
  const centre = globals?.gamma;
  for (let g = 0; g < model.nGamma; g++) {
    if (gammaHeld[g]) continue;
    const b = model.gammaBin[g];
    const region = model.regions[model.binRegion[b]];
    const j = b - region.firstBin;
    let carrying = 0;
    let rest = 0;
    for (const s of region.samples) {
      const sb = model.sampleBinStart[s] + j;
      const A = ws.A[sb];
      if (A <= 0) continue;
      const v = ws.c[s] * ws.E[s] * A;
      if (model.carriesVariance[sb]) carrying += v;
      else rest += v;
    }
    gamma[g] = gammaRoot(carrying, rest, data[b], model.gammaSigma[g], centre ? centre[g] : 1);
  }
  applyGammas(model, gamma, ws);
}
