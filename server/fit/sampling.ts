import { logGamma } from './distributions';
import { createRandom } from './synthetic';

/**
 * Random numbers for pseudo-experiments: one stream per toy, Poisson and Gaussian draws.
 *
 * A toy's stream depends only on the run's seed and the toy's index, so a run gives the same
 * toys however they are split into batches. The generator under it (createRandom, mulberry32)
 * has a 32-bit state that walks one cycle, so two streams seeded apart would overlap after a
 * shift; each toy therefore pairs two streams with independent seeds (a shift that lines up
 * one pair leaves the other apart) and takes 26 + 27 bits from them for a 53-bit uniform
 * (common practice, no source).
 */

/** MurmurHash3's 32-bit finaliser fmix32 (A. Appleby, MurmurHash3, public domain): a bijection that mixes every bit. */
export function mix32(x: number): number {
  x ^= x >>> 16;
  x = Math.imul(x, 0x85ebca6b);
  x ^= x >>> 13;
  x = Math.imul(x, 0xc2b2ae35);
  x ^= x >>> 16;
  return x >>> 0;
}

/** Seed of stream `stream` (0 or 1) of toy `index` in the run seeded `seed`; distinct indices give distinct seeds. */
export function toySeed(seed: number, index: number, stream: number): number {
  const base = mix32((seed ^ Math.imul(stream + 1, 0x9e3779b9)) >>> 0);
  return mix32((base + index) >>> 0);
}

const TWO_26 = 67108864;
const TWO_27 = 134217728;
const TWO_53 = 9007199254740992;

/** The uniform stream of one toy: values in [0, 1) on a 2⁻⁵³ grid. */
export function toyRandom(seed: number, index: number): () => number {
  const hi = createRandom(toySeed(seed, index, 0));
  const lo = createRandom(toySeed(seed, index, 1));
  return () => (Math.floor(hi() * TWO_26) * TWO_27 + Math.floor(lo() * TWO_27)) / TWO_53;
}

/** A standard normal draw by the Box–Muller transform (Box & Muller, Ann. Math. Statist. 29 (1958) 610), cosine branch. */
export function gaussian(rand: () => number): number {
  const u = 1 - rand(); // (0, 1]: no log(0)
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
}

/** Below this mean, inversion; from it on, PTRS (Hörmann states it for μ ≥ 10). */
const PTRS_FROM = 10;

/**
 * A Poisson draw, exact for every mean:
 *  - mean < 10: inversion, a sequential search of the CDF from k = 0 (common practice, no
 *    source; exact up to the rounding of the summed probabilities);
 *  - mean ≥ 10: the transformed rejection method with squeeze, PTRS (W. Hörmann, "The
 *    transformed rejection method for generating Poisson random variables", Insurance:
 *    Mathematics and Economics 12 (1993) 39), whose acceptance test uses ln Γ exactly.
 */
export function poisson(rand: () => number, mean: number): number {
  if (!(mean > 0)) return 0;
  if (mean < PTRS_FROM) {
    const u = rand();
    let k = 0;
    let p = Math.exp(-mean);
    let cdf = p;
    // The summed CDF can stop a rounding error short of 1: stop when the terms vanish.
    while (u > cdf && p > 0) {
      k++;
      p *= mean / k;
      cdf += p;
    }
    return k;
  }
  const smu = Math.sqrt(mean);
  const logMean = Math.log(mean);
  const b = 0.931 + 2.53 * smu;
  const a = -0.059 + 0.02483 * b;
  const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
  const vr = 0.9277 - 3.6224 / (b - 2);
  for (;;) {
    const U = rand() - 0.5;
    const V = rand();
    const us = 0.5 - Math.abs(U);
    const k = Math.floor(((2 * a) / us + b) * U + mean + 0.43);
    if (us >= 0.07 && V <= vr) return k;
    if (k < 0 || (us < 0.013 && V > us)) continue;
    if (Math.log(V) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <= -mean + k * logMean - logGamma(k + 1)) return k;
  }
}
