import type { ExchangeModel } from '@shared/schemas/exchange';
import { EXCHANGE_FORMAT, EXCHANGE_VERSION } from '@shared/schemas/exchange';
import { createRandom, gaussian, poisson } from './synthetic';

/**
 * Deterministic models that are hard on refits, for the refit-agreement suite: where the
 * benchmark models of synthetic.ts are smooth and well measured, these have
 *  - falling spectra whose tail bins are empty in some templates and in the data;
 *  - one-sided variations (one side at nominal) and same-side ones (both sides above or
 *    both below nominal), as shape and as scale effects;
 *  - strongly asymmetric scale effects (κ+ = 1.15 with κ− = 0.98, say);
 *  - control regions with many events that pin their floating normalisation, so that a
 *    refit must move k along a narrow valley;
 *  - shape variations large enough in the tails to drive a template towards zero;
 *  - sparse template statistics in the tails (large relative widths σ_rb).
 * Data are Poisson draws at μ = 1 and θ drawn around 0, so pulls are not all zero.
 */

export interface StressSpec {
  regions: number;
  signalRegions: number;
  bins: number;
  processes: number;
  systematics: number;
  floatingNorms: number;
  /**
   * Systematics whose down variation empties the tail of one background in a signal region
   * (ν− = 0 in its last quarter of bins): at θ = −1 that template reaches the clip edge, and
   * with few events in the tail the minimum can sit on it.
   */
  tailKillers: number;
}

export type StressSize = 'tiny' | 'small' | 'medium' | 'large';

export const STRESS_SIZES: Record<StressSize, StressSpec> = {
  tiny: { regions: 2, signalRegions: 1, bins: 4, processes: 3, systematics: 4, floatingNorms: 1, tailKillers: 0 },
  small: { regions: 3, signalRegions: 1, bins: 10, processes: 4, systematics: 20, floatingNorms: 2, tailKillers: 0 },
  medium: { regions: 6, signalRegions: 2, bins: 25, processes: 6, systematics: 80, floatingNorms: 2, tailKillers: 0 },
  large: { regions: 10, signalRegions: 3, bins: 40, processes: 8, systematics: 250, floatingNorms: 3, tailKillers: 0 },
};

/** The same sizes with one tail killer (see StressSpec.tailKillers): models whose minimum often sits on a clip edge. */
export const EDGE_SIZES: Record<'tiny' | 'small', StressSpec> = {
  tiny: { ...STRESS_SIZES.tiny, tailKillers: 1 },
  small: { ...STRESS_SIZES.small, tailKillers: 1 },
};

const GROUPS = ['detector', 'modelling', 'theory', 'background'];

export function stressModel(size: StressSize | StressSpec, seed = 1): ExchangeModel {
  const spec = typeof size === 'string' ? STRESS_SIZES[size] : size;
  const rand = createRandom(seed * 7919 + 17);
  const B = spec.bins;
  const regions = Array.from({ length: spec.regions }, (_, r) => ({
    key: `${r < spec.signalRegions ? 'SR' : 'CR'}${r}`,
    role: (r < spec.signalRegions ? 'signal' : 'control') as 'signal' | 'control',
    observable: { name: 'x', unit: '' },
    edges: Array.from({ length: B + 1 }, (_, j) => j),
    observed: [] as number[],
  }));
  const processes = Array.from({ length: spec.processes }, (_, p) => ({
    key: p === 0 ? 'signal' : `bkg${p}`,
    kind: (p === 0 ? 'signal' : 'background') as 'signal' | 'background',
  }));

  // Nominal templates. Backgrounds fall steeply; in the tail some templates are exactly empty.
  const nominal = new Map<string, number[]>();
  const templates = [];
  for (let r = 0; r < spec.regions; r++) {
    const isSignal = r < spec.signalRegions;
    const controlScale = isSignal ? 1 : 10 + 40 * rand();
    for (let p = 0; p < spec.processes; p++) {
      const slope = 2 + 4 * rand();
      const emptyFrom = B > 2 && rand() < 0.5 ? Math.max(1, B - 1 - Math.floor(rand() * Math.max(1, B / 4))) : B;
      const values: number[] = [];
      for (let j = 0; j < B; j++) {
        const x = B === 1 ? 0.5 : j / (B - 1);
        let v: number;
        if (p === 0) {
          const peak = Math.exp(-0.5 * ((x - 0.4) / 0.15) ** 2) * (5 + 15 * rand());
          v = isSignal ? peak : 0.01 * peak;
        } else {
          const enriched = !isSignal && p <= spec.floatingNorms && r % spec.floatingNorms === p - 1 ? controlScale : 1;
          v = (60 / p) * enriched * Math.exp(-slope * x) * (0.7 + 0.6 * rand());
          if (j >= emptyFrom) v = 0;
        }
        values.push(v);
      }
      nominal.set(`${r}:${p}`, values);
      const carries = p > 0 ? rand() < 0.7 : rand() < 0.3;
      // Few simulated events in the tail: a large relative width there.
      const weight = 0.05 + 0.5 * rand();
      templates.push({
        region: regions[r].key,
        process: processes[p].key,
        nominal: values,
        ...(carries ? { variance: values.map((v, j) => v * weight * (1 + 3 * (B === 1 ? 0 : j / (B - 1)))) } : {}),
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

  const systematics = [];
  for (let i = 0; i < spec.systematics; i++) {
    const nTouched = 1 + Math.floor(rand() * Math.min(3, spec.processes));
    const touched = new Set<number>();
    const first = spec.processes > 1 && rand() > 0.15 ? 1 : 0;
    while (touched.size < Math.min(nTouched, spec.processes - first)) touched.add(first + Math.floor(rand() * (spec.processes - first)));
    const kind = rand();
    // Which regions: all, or a random subset (a systematic of the control regions only, say).
    const inRegion = regions.map(() => rand() < 0.75);
    if (!inRegion.some(Boolean)) inRegion[Math.floor(rand() * regions.length)] = true;
    const style = rand(); // < 0.5 two-sided, < 0.75 one-sided, else same-side
    const effects: ExchangeModel['systematics'][number]['effects'] = [];
    for (const p of touched) {
      const size = 0.01 + 0.12 * rand();
      regions.forEach((region, r) => {
        if (!inRegion[r]) return;
        const nom = nominal.get(`${r}:${p}`)!;
        if (kind < 0.6) {
          let up = 1 + size;
          let down = 1 / (1 + size * (0.2 + 1.6 * rand())); // asymmetric
          if (style >= 0.5 && style < 0.75) down = 1;
          else if (style >= 0.75) down = 1 + size * (0.1 + 0.6 * rand());
          if (rand() < 0.5) [up, down] = [down, up];
          effects.push({ region: region.key, process: processes[p].key, kind: 'scale' as const, up, down });
        } else {
          // Shape: a tilt that grows in the tail, up to ±(size × 6) in the last bin.
          const tilt = (j: number) => size * (B === 1 ? 1 : -1 + (7 * j) / (B - 1));
          const up = nom.map((v, j) => Math.max(0, v * (1 + tilt(j))));
          let down = nom.map((v, j) => Math.max(0, v * (1 - 0.8 * tilt(j))));
          if (style >= 0.5 && style < 0.75) down = nom.slice();
          else if (style >= 0.75) down = nom.map((v, j) => Math.max(0, v * (1 + 0.4 * tilt(j))));
          effects.push({ region: region.key, process: processes[p].key, kind: 'shape' as const, up, down });
          if (kind > 0.9) effects.push({ region: region.key, process: processes[p].key, kind: 'scale' as const, up: 1 + size / 2, down: 1 - size / 3 });
        }
      });
    }
    systematics.push({ key: `np${i}`, group: GROUPS[i % GROUPS.length], effects });
  }

  // Tail killers: in one signal region, the down variation of one background goes to zero over
  // its last quarter of bins (a ramp from nominal), the up variation raises it by half. With
  // few events there, θ = −1 (the template at the clip edge) can be where the data want it.
  const deficit: { region: number; from: number }[] = [];
  for (let t = 0; t < spec.tailKillers && spec.processes > 1; t++) {
    const r = t % spec.signalRegions;
    let p = 1;
    for (let q = 2; q < spec.processes; q++) if (nominal.get(`${r}:${q}`)![B - 1] > nominal.get(`${r}:${p}`)![B - 1]) p = q;
    const nom = nominal.get(`${r}:${p}`)!;
    const from = Math.max(0, B - Math.max(1, Math.ceil(B / 4)) - 1);
    const ramp = (j: number) => (j <= from ? 0 : Math.min(1, (j - from) / Math.max(1, B - 1 - from)));
    // A few events in the killed tail, and (below) data with a deficit there.
    for (let j = from + 1; j < B; j++) nom[j] = Math.max(nom[j], 2 + 3 * rand());
    deficit.push({ region: r, from });
    const effect = { region: regions[r].key, process: processes[p].key, kind: 'shape' as const, up: nom.map((v, j) => v * (1 + 0.5 * ramp(j))), down: nom.map((v, j) => v * (1 - ramp(j))) };
    systematics.push({ key: `tail${t}`, group: 'tails', effects: [effect] });
  }

  // Data: Poisson draws at μ = 1 with the nominal templates scaled by a few per cent per
  // sample (a stand-in for θ away from 0), so the fit has pulls to find.
  for (let r = 0; r < spec.regions; r++) {
    const totals = new Array(B).fill(0);
    for (let p = 0; p < spec.processes; p++) {
      const shift = 1 + 0.05 * gaussian(rand);
      nominal.get(`${r}:${p}`)!.forEach((v, j) => (totals[j] += v * shift));
    }
    // In a killed tail the data show a deficit: drawn at a fifth of the expectation.
    const tail = deficit.find((d) => d.region === r);
    regions[r].observed = totals.map((t, j) => poisson(rand, tail && j > tail.from ? 0.2 * t : t));
  }

  return {
    format: EXCHANGE_FORMAT,
    version: EXCHANGE_VERSION,
    name: `stress ${typeof size === 'string' ? size : spec.tailKillers > 0 ? 'with a tail killer' : 'custom'} (seed ${seed})`,
    signalStrength: { start: 1, min: -10, max: 20 },
    regions,
    processes,
    floatingNorms,
    templates,
    systematics,
  };
}
