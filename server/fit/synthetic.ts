import type { ExchangeHypothesis, ExchangeModel } from '@shared/schemas/exchange';
import { EXCHANGE_FORMAT, EXCHANGE_VERSION } from '@shared/schemas/exchange';

/**
 * Deterministic synthetic models for benchmarks and tests: falling background spectra, a
 * signal peak, control regions enriched in the backgrounds that float, 1–10 % scale effects,
 * few-% shape effects and template variances; data drawn from the model at μ = 1 with a
 * seeded generator. Optionally, signal hypotheses: the same peak at N masses across the
 * observable's range (docs/fit-engine.md, "Scan over signal hypotheses").
 */

export type SyntheticSize = 'tiny' | 'small' | 'medium' | 'large';

export interface SyntheticSpec {
  regions: number;
  signalRegions: number;
  bins: number;
  processes: number;
  systematics: number;
  floatingNorms: number;
  /** Fraction of templates that carry a variance (1 = every template, so γ in every bin). */
  varianceFraction: number;
}

export const SYNTHETIC_SIZES: Record<SyntheticSize, SyntheticSpec> = {
  tiny: { regions: 1, signalRegions: 1, bins: 1, processes: 2, systematics: 0, floatingNorms: 0, varianceFraction: 0 },
  small: { regions: 3, signalRegions: 1, bins: 10, processes: 4, systematics: 20, floatingNorms: 2, varianceFraction: 0.5 },
  medium: { regions: 6, signalRegions: 2, bins: 25, processes: 6, systematics: 80, floatingNorms: 2, varianceFraction: 0.5 },
  large: { regions: 10, signalRegions: 3, bins: 40, processes: 8, systematics: 250, floatingNorms: 3, varianceFraction: 1 },
};

/** mulberry32: a small seeded PRNG with uniform output in [0, 1) (common practice, no source). */
export function createRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function gaussian(rand: () => number): number {
  const u = Math.max(rand(), 1e-300);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
}

/** Poisson draw: multiplication method below 30, rounded normal above (ample for a benchmark and test data). */
export function poisson(rand: () => number, mean: number): number {
  if (mean <= 0) return 0;
  if (mean < 30) {
    const limit = Math.exp(-mean);
    let k = 0;
    let p = rand();
    while (p > limit) {
      k++;
      p *= rand();
    }
    return k;
  }
  return Math.max(0, Math.round(mean + Math.sqrt(mean) * gaussian(rand)));
}

const GROUPS = ['jets', 'leptons', 'theory', 'flavour', 'luminosity'];

export interface SyntheticOptions {
  /**
   * Signal hypotheses: the signal peak at this many masses spread over the observable's range,
   * each with its own templates and, where the model's signal has a shape effect, that effect
   * for its own peak. The model's own signal is one of them (the middle one), so its templates,
   * effects and data are those of the model without hypotheses, except that no signal template
   * carries a variance (see `signalHypotheses` below). 0: none.
   */
  hypotheses?: number;
  /**
   * A second parameter of interest, `mu2`, on the signal templates of the signal regions after the
   * first (μ keeps the first signal region and the control regions' contamination; with one signal
   * region, `mu2` takes it and μ keeps the contamination alone). Templates,
   * effects and data are those of the model without it.
   */
  secondPoi?: boolean;
}

/** The peak's width and height, in units of the observable's range (x in [0, 1]) and events. */
const PEAK_WIDTH = 0.1;
const peakAt = (x: number, centre: number, B: number) => Math.exp(-0.5 * ((x - centre) / PEAK_WIDTH) ** 2) * (B === 1 ? 10 : 40);

export function syntheticModel(size: SyntheticSize | SyntheticSpec, seed = 1, options: SyntheticOptions = {}): ExchangeModel {
  const spec = typeof size === 'string' ? SYNTHETIC_SIZES[size] : size;
  const nHypotheses = options.hypotheses ?? 0;
  const rand = createRandom(seed);
  const B = spec.bins;
  const regions = Array.from({ length: spec.regions }, (_, r) => ({
    key: `${r < spec.signalRegions ? 'SR' : 'CR'}${r}`,
    role: (r < spec.signalRegions ? 'signal' : 'control') as 'signal' | 'control',
    observable: { name: 'mass', unit: 'GeV' },
    edges: Array.from({ length: B + 1 }, (_, j) => 100 + 10 * j),
    observed: [] as number[],
  }));
  const processes = Array.from({ length: spec.processes }, (_, p) => ({
    key: p === 0 ? 'signal' : `bkg${p}`,
    kind: (p === 0 ? 'signal' : 'background') as 'signal' | 'background',
  }));

  // Nominal templates: a peak for the signal, falling spectra for the backgrounds.
  const templates = [];
  const nominal = new Map<string, number[]>();
  for (let r = 0; r < spec.regions; r++) {
    const isSignal = r < spec.signalRegions;
    for (let p = 0; p < spec.processes; p++) {
      const values: number[] = [];
      for (let j = 0; j < B; j++) {
        const x = B === 1 ? 0.5 : j / (B - 1);
        let v: number;
        if (p === 0) {
          const peak = peakAt(x, 0.5, B);
          v = isSignal ? peak : 0.02 * peak;
        } else {
          const amplitude = (B === 1 ? 50 : 400) / p;
          const enriched = !isSignal && p <= spec.floatingNorms && r % spec.floatingNorms === p - 1 ? 5 : 1;
          v = amplitude * enriched * Math.exp(-x * (1 + 0.5 * p)) * (0.8 + 0.4 * rand());
        }
        values.push(v);
      }
      const key = `${regions[r].key}\u0000${processes[p].key}`;
      nominal.set(key, values);
      const withVariance = rand() < spec.varianceFraction || (spec.varianceFraction >= 1 && p > 0);
      // Variance of a template filled with events of weight 0.05–0.3.
      const weight = 0.05 + 0.25 * rand();
      templates.push({
        region: regions[r].key,
        process: processes[p].key,
        nominal: values,
        ...(withVariance && !(nHypotheses > 0 && p === 0) ? { variance: values.map((v) => v * weight) } : {}),
      });
    }
  }

  const floatingNorms = Array.from({ length: spec.floatingNorms }, (_, f) => ({
    key: `k_bkg${f + 1}`,
    start: 1,
    min: 0,
    max: 10,
    targets: regions.map((r) => ({ region: r.key, process: `bkg${f + 1}` })),
  }));

  // Systematics: each touches 1–3 processes in every region; 70 % scale, 20 % shape, 10 % both.
  const systematics = [];
  /** The signal's shape effects, by systematic: their slope, for the hypotheses' own peaks. */
  const signalShapes: { systematic: string; slope: number }[] = [];
  for (let i = 0; i < spec.systematics; i++) {
    const nTouched = 1 + Math.floor(rand() * Math.min(3, spec.processes));
    const touched = new Set<number>();
    // The signal carries few systematics (a tenth of them), as in a typical analysis.
    const first = spec.processes > 1 && rand() > 0.1 ? 1 : 0;
    while (touched.size < Math.min(nTouched, spec.processes - first)) touched.add(first + Math.floor(rand() * (spec.processes - first)));
    const kind = rand();
    const effects = [];
    for (const p of touched) {
      const size = 0.01 + 0.09 * rand();
      const asym = 1 + 0.3 * (rand() - 0.5);
      const slope = 0.02 + 0.04 * rand();
      for (const region of regions) {
        const nom = nominal.get(`${region.key}\u0000${processes[p].key}`)!;
        if (kind < 0.8) effects.push({ region: region.key, process: processes[p].key, kind: 'scale' as const, up: 1 + size, down: 1 / (1 + size * asym) });
        if (kind >= 0.7) {
          const up = nom.map((v, j) => v * (1 + slope * (B === 1 ? 1 : (2 * j) / (B - 1) - 1)));
          const down = nom.map((v, j) => v * (1 - slope * 0.9 * (B === 1 ? 1 : (2 * j) / (B - 1) - 1)));
          effects.push({ region: region.key, process: processes[p].key, kind: 'shape' as const, up, down });
        }
      }
      if (p === 0 && kind >= 0.7) signalShapes.push({ systematic: `syst${i}`, slope });
    }
    systematics.push({ key: `syst${i}`, group: GROUPS[i % GROUPS.length], effects });
  }

  // Data: Poisson draws at μ = 1 and nominal nuisance parameters.
  for (const region of regions) {
    const totals = new Array(B).fill(0);
    for (const p of processes) nominal.get(`${region.key}\u0000${p.key}`)!.forEach((v, j) => (totals[j] += v));
    region.observed = totals.map((t) => poisson(rand, t));
  }

  return {
    format: EXCHANGE_FORMAT,
    version: EXCHANGE_VERSION,
    name: `synthetic ${typeof size === 'string' ? size : 'custom'} (seed ${seed})`,
    signalStrength: { start: 1, min: -10, max: 20 },
    regions,
    processes,
    floatingNorms,
    templates,
    systematics,
    ...(options.secondPoi ? { parametersOfInterest: [{ key: 'mu2', label: 'second signal strength', start: 1, min: -10, max: 20, targets: (spec.signalRegions > 1 ? regions.slice(1, spec.signalRegions) : regions.slice(0, 1)).map((r) => ({ region: r.key, process: 'signal' })) }] } : {}),
    ...(nHypotheses > 0 ? { signalHypotheses: signalHypotheses(nHypotheses, regions, spec.signalRegions, B, signalShapes) } : {}),
  };
}

/**
 * N hypotheses of the peak's position: centres x_i = 0.5 + (i − i₀)·δ, i₀ = ⌊(N − 1)/2⌋, with the
 * step δ = 0.45/max(i₀, N − 1 − i₀), so that they lie in [0.05, 0.95] of the range (and span it
 * for odd N) and hypothesis i₀ is the model's own peak (x = 0.5). The value is the mass at the
 * centre, in the observable's unit; every signal template of the model is replaced (the control
 * regions' 2 % contamination too), and each shape effect of the signal gets the same tilt of
 * the hypothesis's peak. No draw of the generator is used, so the rest of the model is the same.
 *
 * No signal template carries a variance (the model's own included): a template variance enters
 * the relative width σ_rb of the bin's γ, so signal templates with variances would give every
 * hypothesis a different likelihood even at μ = 0, and background-only pseudo-experiments could
 * not share one fit at μ = 0 across the scan (hypotheses.ts checks this and falls back to one such
 * fit per group of hypotheses that agree).
 */
function signalHypotheses(
  n: number,
  regions: { key: string; edges: number[] }[],
  signalRegions: number,
  B: number,
  shapes: { systematic: string; slope: number }[],
): NonNullable<ExchangeModel['signalHypotheses']> {
  const i0 = Math.floor((n - 1) / 2);
  const step = n === 1 ? 0 : 0.45 / Math.max(i0, n - 1 - i0);
  const lo = regions[0].edges[0];
  const hi = regions[0].edges[B];
  const points: ExchangeHypothesis[] = [];
  for (let i = 0; i < n; i++) {
    const centre = 0.5 + (i - i0) * step;
    // bin j's x is j/(B − 1), at its centre: the mass at x is the first bin's centre plus x times the span of the centres
    // (one bin: the peak does not move, and the values only tell the hypotheses apart)
    const half = (regions[0].edges[1] - lo) / 2;
    const mass = Number((B === 1 ? lo + centre * (hi - lo) : lo + half + centre * (hi - lo - 2 * half)).toPrecision(6));
    const templates = regions.map((region, r) => {
      const nominal = Array.from({ length: B }, (_, j) => {
        const peak = peakAt(B === 1 ? 0.5 : j / (B - 1), centre, B);
        return r < signalRegions ? peak : 0.02 * peak;
      });
      return { region: region.key, process: 'signal', nominal };
    });
    const effects = shapes.flatMap(({ systematic, slope }) =>
      templates.map((t) => ({
        systematic,
        region: t.region,
        process: 'signal',
        kind: 'shape' as const,
        up: t.nominal.map((v, j) => v * (1 + slope * (B === 1 ? 1 : (2 * j) / (B - 1) - 1))),
        down: t.nominal.map((v, j) => v * (1 - slope * 0.9 * (B === 1 ? 1 : (2 * j) / (B - 1) - 1))),
      })),
    );
    points.push({ key: `m${i}`, label: `m = ${mass} GeV`, value: mass, templates, effects });
  }
  return { parameter: { name: 'mass', unit: 'GeV' }, points };
}
