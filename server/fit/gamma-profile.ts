import type { CompiledModel, GlobalObservables } from './compiled-model';
import { applyGammas, evaluateYields, type Workspace } from './yields';

/**
 * γ profiled in closed form (Conway, arXiv:1103.0354, Barlow–Beeston lite): in bin b, with m
 * the yield of the templates carrying a variance (at γ = 1), o the rest, n the count and σ the
 * relative width and g the centre of the constraint (γ − g)²/(2σ²) (1 unless a pseudo-experiment
 * moved it), ∂NLL/∂γ = m − n m/(m γ + o) + (γ − g)/σ² = 0 is, times (m γ + o) σ², the quadratic
 *   m γ² + (o − g m + m² σ²) γ + (m σ² (o − n) − g o) = 0,
 * whose larger root is the minimum (the NLL is strictly convex in γ); clipped to [0, 10].
 * With no carrying yield the constraint alone decides: γ = g.
 */
export function gammaRoot(m: number, o: number, n: number, sigma: number, centre = 1): number {
  if (!(m > 0)) return Math.min(10, Math.max(0, centre));
  const s2 = sigma * sigma;
  const b = o - centre * m + m * m * s2;
  const c = m * s2 * (o - n) - centre * o;
  const disc = Math.max(0, b * b - 4 * m * c);
  const root = b >= 0 ? (2 * c) / (-b - Math.sqrt(disc)) : (-b + Math.sqrt(disc)) / (2 * m);
  return Math.min(10, Math.max(0, Number.isFinite(root) ? root : 0));
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
  evaluateYields(model, phi, gamma, ws);
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
