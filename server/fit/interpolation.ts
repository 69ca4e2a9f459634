/**
 * The one smooth interpolation rule of docs/likelihood.md §2, for offsets a (θ = +1) and b (θ = −1):
 *
 *   s(x) = x (3x⁴ − 10x² + 15) / 8   for |x| < 1,   s(x) = sign(x) otherwise
 *   I(θ; a, b) = (θ/2) [(a − b) + (a + b) s(θ)] = θ·hd + u(θ)·hs
 *
 * with hd = (a − b)/2, hs = (a + b)/2 and u(θ) = θ s(θ). s' = 15 (x² − 1)² / 8 and
 * s'' = 15 x (x² − 1) / 2 vanish at |x| = 1, so I is C² everywhere and linear beyond ±1.
 */

/** u(θ) = θ s(θ) and its first two derivatives, written into out[0..2]. */
export function evenPart(theta: number, out: Float64Array | number[]): void {
  if (theta >= 1 || theta <= -1) {
    out[0] = Math.abs(theta);
    out[1] = theta > 0 ? 1 : -1;
    out[2] = 0;
    return;
  }
  const t2 = theta * theta;
  const s = (theta * (3 * t2 * t2 - 10 * t2 + 15)) / 8;
  const q = t2 - 1;
  const ds = (15 * q * q) / 8;
  const dds = (15 * theta * q) / 2;
  out[0] = theta * s;
  out[1] = s + theta * ds;
  out[2] = 2 * ds + theta * dds;
}

const scratch = new Float64Array(3);

/** I(θ; a, b): the offset at θ for offsets a at +1 and b at −1. */
export function interpolate(theta: number, a: number, b: number): number {
  evenPart(theta, scratch);
  return theta * 0.5 * (a - b) + scratch[0] * 0.5 * (a + b);
}

/** dI/dθ. */
export function interpolateDerivative(theta: number, a: number, b: number): number {
  evenPart(theta, scratch);
  return 0.5 * (a - b) + scratch[1] * 0.5 * (a + b);
}

/** d²I/dθ². */
export function interpolateSecondDerivative(theta: number, a: number, b: number): number {
  evenPart(theta, scratch);
  return scratch[2] * 0.5 * (a + b);
}
