import type { MemberRole } from '@shared/permissions';
import type { ExchangeModelInput, Effect, HypothesisEffect } from '@shared/schemas/exchange';
import type { EntryState } from '@shared/schemas/api';
import { createRandom, normalCdf } from '../fit';

/**
 * The invented demo scenario: the LANTERN experiment at the (fictional) Meridian Ring collider
 * searches for the vireon, a made-up narrow resonance decaying to a pair of "flares" (a made-up
 * detector signature). Every name and number here is invented and generated deterministically.
 */

/** The engine's seeded PRNG (mulberry32), so the demo is the same on every machine. */
function prng(seed: number) {
  const next = createRandom(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - next())) * Math.cos(2 * Math.PI * next());
  /** Poisson: product of uniforms for small means, rounded normal beyond (demo data only). */
  const poisson = (mean: number) => {
    if (mean <= 0) return 0;
    if (mean > 60) return Math.max(0, Math.round(mean + Math.sqrt(mean) * normal()));
    const limit = Math.exp(-mean);
    let k = 0;
    let p = next();
    while (p > limit) {
      k++;
      p *= next();
    }
    return k;
  };
  return { next, normal, poisson, uniform: (lo: number, hi: number) => lo + (hi - lo) * next() };
}

export const DEMO_PASSWORD = 'lantern-demo-2026';

export type DemoAccount = { email: string; name: string; isAdmin: boolean; note: string };
const DEMO_ACCOUNTS: DemoAccount[] = [
  { email: 'admin@lantern.example', name: 'Hollis Vantreight', isAdmin: true, note: 'admin: accounts, analyses, outbox' },
  { email: 'mira@lantern.example', name: 'Mira Quellbright', isAdmin: false, note: 'convener of every analysis' },
  { email: 'otto@lantern.example', name: 'Otto Brannholm', isAdmin: false, note: 'analyst' },
  { email: 'juno@lantern.example', name: 'Juno Feldspire', isAdmin: false, note: 'systematics contact (calorimetry, identification)' },
  { email: 'pim@lantern.example', name: 'Pim Castellane', isAdmin: false, note: 'systematics contact (theory, background modelling)' },
  { email: 'rafe@lantern.example', name: 'Rafe Orlowyn', isAdmin: false, note: 'reader' },
];

export type DemoEntryMeta = { owner: string; state: EntryState; justification: string; references: string[] };
export type DemoAnalysis = {
  slug: string;
  name: string;
  description: string;
  blinded: boolean;
  /** What every chart of the analysis carries (analyses.plot_labels). */
  plotLabels: { experiment: string; status: string; luminosity: string; energy: string };
  members: { email: string; role: MemberRole }[];
  model: ExchangeModelInput;
  entries: Record<string, DemoEntryMeta>;
};

const range = (n: number) => Array.from({ length: n }, (_, i) => i);
const round = (x: number, digits = 3) => Math.round(x * 10 ** digits) / 10 ** digits;
const edgesOf = (lo: number, hi: number, n: number) => range(n + 1).map((i) => round(lo + ((hi - lo) * i) / n, 6));
const centres = (edges: number[]) => range(edges.length - 1).map((i) => (edges[i] + edges[i + 1]) / 2);

type RegionSpec = { key: string; label: string; role: 'signal' | 'control' | 'validation'; lo: number; hi: number; bins: number; scale: Record<string, number> };

/** The vireon's mass in the model's own signal templates, in GeV. */
const VIREON_MASS = 1310;
/** The masses of the signal hypotheses, in GeV: 30 points in steps of 20, the model's own among them. */
const HYPOTHESIS_MASSES = range(30).map((i) => 1010 + 20 * i);
/** The flare-pair mass resolution at a vireon mass (18 GeV at the model's own), growing with the mass. */
const resolution = (mass: number) => 18 * (mass / VIREON_MASS) ** 1.5;
/** The selection efficiency of a signal region, relative to the one at the model's own mass: rising, then flat. */
const efficiency = (region: string, mass: number) => {
  const eff = (m: number) => (region === 'SR-core' ? 1 - 0.55 * Math.exp(-(m - 900) / 220) : 1 - 0.3 * Math.exp(-(m - 900) / 300));
  return eff(mass) / eff(VIREON_MASS);
};
/** The narrow vireon peak at a mass, at an observable value. */
const peak = (mass: number, x: number) => Math.exp(-0.5 * ((x - mass) / resolution(mass)) ** 2);

/** Background shapes: falling spectra with different slopes; the signal is a narrow peak. */
function spectrum(process: string, x: number) {
  switch (process) {
    case 'vireon':
      return peak(VIREON_MASS, x);
    case 'continuum':
      return Math.exp(-(x - 1000) / 170);
    case 'showerpair':
      return Math.exp(-(x - 1000) / 260) * (1 + 0.15 * Math.sin((x - 1000) / 90));
    case 'cascade':
      return Math.exp(-(x - 1000) / 120);
    case 'halo':
      return 0.6 + 0.4 * Math.exp(-(x - 1000) / 400);
    case 'pileupfake':
      return Math.exp(-(x - 1000) / 90);
    default:
      return 1;
  }
}

function vireonAnalysis(): DemoAnalysis {
  const rnd = prng(20261202);
  const processes = [
    { key: 'vireon', label: 'Vireon (signal)', kind: 'signal' as const, colour: '#c0392b' },
    { key: 'continuum', label: 'Prompt flare continuum', kind: 'background' as const, colour: '#2e6f95' },
    { key: 'showerpair', label: 'Shower pairs', kind: 'background' as const, colour: '#7a9e3b' },
    { key: 'cascade', label: 'Single cascade + fake flare', kind: 'background' as const, colour: '#d9a441' },
    { key: 'halo', label: 'Beam halo', kind: 'background' as const, colour: '#8e6c8a' },
    { key: 'pileupfake', label: 'Overlap fakes', kind: 'background' as const, colour: '#5b8c85' },
  ];
  // yields per region are totals over the region, before the spectrum shape is applied
  const regions: RegionSpec[] = [
    { key: 'SR-core', label: 'Signal region, tight flare identification', role: 'signal', lo: 1000, hi: 1600, bins: 24, scale: { vireon: 42, continuum: 2600, showerpair: 520, cascade: 240, halo: 60, pileupfake: 90 } },
    { key: 'SR-wide', label: 'Signal region, loose flare identification', role: 'signal', lo: 1000, hi: 1600, bins: 12, scale: { vireon: 18, continuum: 3900, showerpair: 1300, cascade: 610, halo: 150, pileupfake: 260 } },
    { key: 'CR-low', label: 'Low-mass sideband', role: 'control', lo: 600, hi: 1000, bins: 16, scale: { continuum: 52000, showerpair: 9000, cascade: 5100, halo: 400, pileupfake: 2100 } },
    { key: 'CR-shower', label: 'Shower-enriched control region', role: 'control', lo: 1000, hi: 1600, bins: 8, scale: { continuum: 700, showerpair: 4200, cascade: 300, halo: 40, pileupfake: 80 } },
    { key: 'VR-mid', label: 'Validation region between sideband and signal region', role: 'validation', lo: 900, hi: 1100, bins: 8, scale: { vireon: 1, continuum: 5200, showerpair: 900, cascade: 500, halo: 40, pileupfake: 190 } },
  ];

  /** A template of `total` events over the region with this shape, and its variance from weighted simulated events. */
  const template = (r: RegionSpec, total: number, shape: number[]) => {
    const sum = shape.reduce((s, v) => s + v, 0);
    const nom = shape.map((v) => round((total * v) / sum, 4));
    // simulated events carry weights: relative variance ~ 1/N_eff with N_eff a few hundred per bin
    const variance = nom.map((v) => round((v * v) / Math.max(20, 400 * (v / (total / r.bins) + 0.05)), 6));
    return { nominal: nom, variance };
  };
  const templates: ExchangeModelInput['templates'] = [];
  const nominal = new Map<string, number[]>();
  for (const r of regions) {
    const edges = edgesOf(r.lo, r.hi, r.bins);
    for (const p of processes) {
      const total = r.scale[p.key];
      if (!total) continue;
      const { nominal: nom, variance } = template(r, total, centres(edges).map((x) => spectrum(p.key, r.role === 'control' && r.key === 'CR-low' ? x + 400 : x)));
      nominal.set(`${r.key}/${p.key}`, nom);
      templates.push({ region: r.key, process: p.key, nominal: nom, variance: p.key === 'halo' ? undefined : variance });
    }
  }

  const mc = ['vireon', 'continuum', 'showerpair', 'cascade', 'pileupfake'];
  const fitRegions = regions.filter((r) => r.role !== 'validation').map((r) => r.key);
  const allRegions = regions.map((r) => r.key);
  const pairs = (procs: string[], regs = allRegions) => regs.flatMap((r) => procs.filter((p) => nominal.has(`${r}/${p}`)).map((p) => ({ region: r, process: p })));

  const scale = (procs: string[], up: number, down: number, regs?: string[]): Effect[] =>
    pairs(procs, regs).map(({ region, process }) => ({ region, process, kind: 'scale', up, down }));
  type TiltOptions = { regs?: string[]; offset?: number; oneSided?: boolean; jitter?: number; curve?: number };
  /** The up/down templates of a linear tilt across the observable (plus an optional jitter) of one nominal template. */
  const tilted = (nom: number[], amplitude: number, opts: TiltOptions, random: typeof rnd) => {
    const n = nom.length;
    const rel = range(n).map((b) => {
      const t = n > 1 ? (2 * b) / (n - 1) - 1 : 0;
      return (opts.offset ?? 0) + amplitude * t + (opts.curve ?? 0) * (t * t - 0.33) + (opts.jitter ?? 0) * random.normal();
    });
    const up = nom.map((v, b) => round(Math.max(0, v * (1 + rel[b])), 4));
    // down is a slightly smaller mirror of up: variations are rarely exactly symmetric
    const asym = 0.85 + 0.3 * random.next();
    const down = opts.oneSided ? nom.map((v, b) => round(Math.max(0, 2 * v - up[b]), 4)) : nom.map((v, b) => round(Math.max(0, v * (1 - rel[b] * asym)), 4));
    return { up, down };
  };
  /** How each tilt was made, so that the signal hypotheses make their own the same way. */
  const tilts = new WeakMap<Effect[], { amplitude: number; opts: TiltOptions }>();
  /** A shape effect: a linear tilt across the observable (plus an optional jitter), as up/down templates. */
  const tilt = (procs: string[], amplitude: number, opts: TiltOptions = {}): Effect[] => {
    const effects = pairs(procs, opts.regs).map(({ region, process }): Effect => ({ region, process, kind: 'shape', ...tilted(nominal.get(`${region}/${process}`)!, amplitude, opts, rnd) }));
    tilts.set(effects, { amplitude, opts });
    return effects;
  };

  type Sys = { key: string; label: string; group: string; owner: string; state: EntryState; effects: Effect[]; description: string };
  const juno = 'juno@lantern.example';
  const pim = 'pim@lantern.example';
  const otto = 'otto@lantern.example';
  const sys: Sys[] = [
    { key: 'lumi', label: 'Integrated luminosity', group: 'luminosity', owner: otto, state: 'accepted', description: 'Uncertainty of the luminosity calibration scan, applied to simulated processes.', effects: scale(['vireon', 'halo'], 1.021, 0.979) },
    // the demo's over-constrained parameter: a few-% shape on the dominant background in the
    // 50 000-event sideband, where the data's precision per bin is well below 1 %
    { key: 'flare_escale', label: 'Flare energy scale', group: 'calorimetry', owner: juno, state: 'accepted', description: 'Calibration of the flare energy response, propagated as a shift of the reconstructed pair mass.', effects: tilt(mc, 0.045, { jitter: 0.002 }) },
    { key: 'flare_eres', label: 'Flare energy resolution', group: 'calorimetry', owner: juno, state: 'accepted', description: 'Smearing of the flare energy beyond the simulated resolution.', effects: tilt(['vireon', 'continuum'], 0.02, { curve: 0.05, regs: fitRegions }) },
    { key: 'flare_eres_tail', label: 'Flare resolution tail', group: 'calorimetry', owner: juno, state: 'submitted', description: 'Non-Gaussian tail of the flare energy response.', effects: tilt(['vireon'], 0.01, { curve: 0.08, regs: ['SR-core', 'SR-wide'] }) },
    { key: 'calo_nonlin', label: 'Calorimeter non-linearity', group: 'calorimetry', owner: juno, state: 'draft', description: 'Residual non-linearity of the calorimeter response at high energy.', effects: tilt(['continuum', 'showerpair'], 0.012, { offset: 0.004 }) },
    { key: 'calo_leak', label: 'Longitudinal leakage', group: 'calorimetry', owner: juno, state: 'accepted', description: 'Energy leaking beyond the calorimeter depth.', effects: scale(['vireon', 'continuum'], 1.008, 0.993) },
    { key: 'flare_id', label: 'Flare identification efficiency', group: 'identification', owner: juno, state: 'accepted', description: 'Data-to-simulation ratio of the tight identification efficiency.', effects: scale(['vireon', 'continuum', 'showerpair'], 1.031, 0.969, ['SR-core', 'CR-low', 'CR-shower']) },
    { key: 'flare_id_loose', label: 'Loose identification efficiency', group: 'identification', owner: juno, state: 'accepted', description: 'As flare_id, for the loose working point.', effects: scale(['vireon', 'continuum', 'showerpair'], 1.018, 0.982, ['SR-wide']) },
    { key: 'flare_iso', label: 'Isolation efficiency', group: 'identification', owner: juno, state: 'submitted', description: 'Efficiency of the isolation requirement, from a tag-and-probe method.', effects: scale(mc, 1.012, 0.989) },
    { key: 'trigger_eff', label: 'Trigger efficiency', group: 'identification', owner: juno, state: 'accepted', description: 'Efficiency of the two-flare trigger near its threshold.', effects: scale(mc, 1.006, 0.994) },
    { key: 'vertex_eff', label: 'Vertex association', group: 'tracking', owner: juno, state: 'accepted', description: 'Efficiency of associating both flares with the primary vertex.', effects: scale(mc, 1.01, 0.991) },
    { key: 'track_veto', label: 'Track veto efficiency', group: 'tracking', owner: juno, state: 'sent_back', description: 'Efficiency of the veto on charged tracks pointing at a flare.', effects: scale(['vireon', 'continuum'], 1.015, 0.988) },
    { key: 'pileup', label: 'Pile-up reweighting', group: 'tracking', owner: juno, state: 'accepted', description: 'Variation of the pile-up profile used to reweight simulation.', effects: tilt(mc, 0.01, { jitter: 0.004, regs: fitRegions }) },
    { key: 'overlap_rate', label: 'Overlap fake rate', group: 'background modelling', owner: pim, state: 'accepted', description: 'Rate at which overlapping showers fake a flare, from a dedicated sample.', effects: scale(['pileupfake'], 1.25, 0.8) },
    { key: 'cascade_fake', label: 'Cascade fake-flare rate', group: 'background modelling', owner: pim, state: 'accepted', description: 'Probability that a cascade is reconstructed as a flare.', effects: scale(['cascade'], 1.18, 0.86) },
    { key: 'cascade_shape', label: 'Cascade mass shape', group: 'background modelling', owner: pim, state: 'submitted', description: 'Alternative extrapolation of the cascade mass shape.', effects: tilt(['cascade'], 0.06, { regs: fitRegions }) },
    { key: 'halo_norm', label: 'Beam-halo normalisation', group: 'background modelling', owner: pim, state: 'accepted', description: 'Beam-halo rate from non-colliding bunches.', effects: scale(['halo'], 1.3, 0.75) },
    { key: 'halo_shape', label: 'Beam-halo timing shape', group: 'background modelling', owner: pim, state: 'draft', description: 'Alternative timing-based halo template.', effects: tilt(['halo'], 0.08, { regs: ['SR-core', 'SR-wide'] }) },
    { key: 'continuum_func', label: 'Continuum spectrum model', group: 'background modelling', owner: pim, state: 'accepted', description: 'Difference between two functional descriptions of the continuum spectrum (one-sided, mirrored).', effects: tilt(['continuum'], 0.025, { oneSided: true, curve: 0.01, regs: fitRegions }) },
    { key: 'showerpair_model', label: 'Shower-pair modelling', group: 'background modelling', owner: pim, state: 'accepted', description: 'Alternative shower development model for shower pairs.', effects: tilt(['showerpair'], 0.04, { regs: fitRegions }) },
    { key: 'showerpair_extrap', label: 'Shower-pair extrapolation', group: 'background modelling', owner: pim, state: 'accepted', description: 'Extrapolation of the shower-pair normalisation from its control region.', effects: scale(['showerpair'], 1.05, 0.95, ['SR-core', 'SR-wide']) },
    { key: 'continuum_extrap', label: 'Continuum extrapolation', group: 'background modelling', owner: pim, state: 'accepted', description: 'Extrapolation of the continuum from the sideband into the signal regions.', effects: scale(['continuum'], 1.03, 0.972, ['SR-core', 'SR-wide', 'CR-shower']) },
    { key: 'scale_mu_r', label: 'Renormalisation scale (signal)', group: 'theory', owner: pim, state: 'accepted', description: 'Variation of the renormalisation scale by factors 2 and 1/2 in the signal prediction.', effects: scale(['vireon'], 1.07, 0.94) },
    { key: 'scale_mu_f', label: 'Factorisation scale (signal)', group: 'theory', owner: pim, state: 'accepted', description: 'Variation of the factorisation scale by factors 2 and 1/2 in the signal prediction.', effects: scale(['vireon'], 1.035, 0.97) },
    { key: 'signal_pdf', label: 'Parton densities (signal)', group: 'theory', owner: pim, state: 'accepted', description: 'Spread of the parton density replicas for the signal.', effects: scale(['vireon'], 1.025, 0.976) },
    { key: 'signal_shower', label: 'Signal shower model', group: 'theory', owner: pim, state: 'submitted', description: 'Alternative parton-shower model for the signal acceptance.', effects: tilt(['vireon'], 0.015, { offset: 0.02, regs: ['SR-core', 'SR-wide'] }) },
    { key: 'continuum_scale', label: 'Scale choice (continuum)', group: 'theory', owner: pim, state: 'accepted', description: 'Scale variations of the continuum prediction (the normalisation floats; shape only).', effects: tilt(['continuum'], 0.02, { regs: fitRegions }) },
    { key: 'continuum_pdf', label: 'Parton densities (continuum)', group: 'theory', owner: pim, state: 'accepted', description: 'Parton density replicas for the continuum shape.', effects: tilt(['continuum'], 0.008, { jitter: 0.002, regs: fitRegions }) },
    { key: 'showerpair_xsec', label: 'Shower-pair cross-section', group: 'theory', owner: pim, state: 'accepted', description: 'Normalisation of the shower-pair prediction outside its control region.', effects: scale(['showerpair'], 1.06, 0.94, ['VR-mid']) },
    { key: 'cascade_xsec', label: 'Cascade cross-section', group: 'theory', owner: pim, state: 'accepted', description: 'Cross-section uncertainty of the cascade process.', effects: scale(['cascade'], 1.08, 0.93) },
    { key: 'pileupfake_xsec', label: 'Overlap-fake cross-section', group: 'theory', owner: pim, state: 'draft', description: 'Cross-section of the processes producing overlap fakes.', effects: scale(['pileupfake'], 1.1, 0.9) },
    { key: 'sig_acceptance', label: 'Signal acceptance model', group: 'theory', owner: pim, state: 'accepted', description: 'Acceptance difference between two signal generators.', effects: scale(['vireon'], 1.02, 0.985) },
    { key: 'timing_cut', label: 'Timing requirement', group: 'tracking', owner: juno, state: 'accepted', description: 'Efficiency of the calorimeter timing requirement.', effects: scale(['vireon', 'continuum', 'showerpair'], 1.004, 0.996) },
    { key: 'flare_angle', label: 'Flare angular resolution', group: 'calorimetry', owner: juno, state: 'accepted', description: 'Resolution of the flare direction, entering the pair mass.', effects: tilt(['vireon'], 0.004, { curve: 0.02, regs: ['SR-core', 'SR-wide'] }) },
    { key: 'beam_energy', label: 'Beam energy spread', group: 'luminosity', owner: otto, state: 'accepted', description: 'Spread of the collision energy.', effects: scale(['vireon'], 1.005, 0.995) },
    { key: 'dead_cells', label: 'Dead calorimeter cells', group: 'calorimetry', owner: juno, state: 'submitted', description: 'Map of inactive cells (tiny effect; left for review of pruning).', effects: scale(['continuum'], 1.0004, 0.9996) },
    { key: 'noise_model', label: 'Electronic noise model', group: 'calorimetry', owner: juno, state: 'draft', description: 'Shape effect of the noise model (nearly flat: kept to show the flat-shape warning).', effects: tilt(['continuum'], 0, { offset: 0.006, regs: ['SR-wide'] }) },
    { key: 'halo_veto', label: 'Halo veto efficiency', group: 'tracking', owner: juno, state: 'sent_back', description: 'Efficiency of the halo veto on signal events; up and down both raise the yield (under review).', effects: scale(['vireon'], 1.01, 1.004) },
    { key: 'pileup_density', label: 'Pile-up density', group: 'tracking', owner: juno, state: 'accepted', description: 'Variation of the average number of overlapping collisions.', effects: scale(['pileupfake'], 1.12, 0.9) },
    { key: 'flare_conversion', label: 'Early-conversion fraction', group: 'identification', owner: juno, state: 'accepted', description: 'Fraction of flares converting before the calorimeter.', effects: scale(['vireon', 'continuum'], 1.009, 0.992) },
  ];

  const systematics = sys.map((s) => ({ key: s.key, label: s.label, group: s.group, description: s.description, effects: s.effects }));

  // Observed data: the expectation at μ = 0.5 with a few nuisance parameters pulled, Poisson-fluctuated.
  const truth: Record<string, number> = { flare_escale: 0.6, continuum_func: -0.7, cascade_fake: 0.9, halo_norm: -0.4 };
  const truthNorm: Record<string, number> = { continuum: 1.04, showerpair: 0.93 };
  const observed = new Map<string, number[]>();
  for (const r of regions) {
    const expected = range(r.bins).map(() => 0);
    for (const p of processes) {
      const nom = nominal.get(`${r.key}/${p.key}`);
      if (!nom) continue;
      const yields = nom.slice();
      for (const s of sys) {
        const th = truth[s.key];
        if (!th) continue;
        for (const e of s.effects) {
          if (e.region !== r.key || e.process !== p.key) continue;
          if (e.kind === 'scale') yields.forEach((_, b) => (yields[b] *= th > 0 ? e.up ** th : e.down ** -th));
          else yields.forEach((_, b) => (yields[b] += th > 0 ? th * (e.up[b] - nom[b]) : -th * (e.down[b] - nom[b])));
        }
      }
      const mult = (p.key === 'vireon' ? 0.5 : 1) * (truthNorm[p.key] ?? 1);
      yields.forEach((v, b) => (expected[b] += Math.max(0, v) * mult));
    }
    observed.set(r.key, expected.map((v) => rnd.poisson(v)));
  }

  // Signal hypotheses: the vireon at each mass of the scan, with its own templates in the signal
  // regions (the peak's width from the mass resolution, its yield from the selection efficiency
  // and the part of the peak inside the region) and the signal's shape effects made again for
  // that peak. The model's own signal is the hypothesis at its mass: same templates, same effects.
  const signalRegions = regions.filter((r) => r.role === 'signal');
  const signalShapes = sys.flatMap((s) => s.effects.filter((e) => e.process === 'vireon' && e.kind === 'shape' && signalRegions.some((r) => r.key === e.region)).map((e) => ({ systematic: s.key, effect: e, recipe: tilts.get(s.effects)! })));
  const hrnd = prng(20261203);
  const points = HYPOTHESIS_MASSES.map((mass) => {
    const own = mass === VIREON_MASS;
    const hypothesisTemplates = signalRegions.map((r) => {
      if (own) return { ...templates.find((t) => t.region === r.key && t.process === 'vireon')! };
      const edges = edgesOf(r.lo, r.hi, r.bins);
      const inside = (m: number) => normalCdf((r.hi - m) / resolution(m)) - normalCdf((r.lo - m) / resolution(m));
      const total = r.scale.vireon * efficiency(r.key, mass) * (inside(mass) / inside(VIREON_MASS));
      return { region: r.key, process: 'vireon', ...template(r, total, centres(edges).map((x) => peak(mass, x))) };
    });
    const effects: HypothesisEffect[] = signalShapes.map(({ systematic, effect, recipe }) => {
      if (own) return { systematic, ...effect };
      const nom = hypothesisTemplates.find((t) => t.region === effect.region)!.nominal;
      return { systematic, region: effect.region, process: 'vireon', kind: 'shape', ...tilted(nom, recipe.amplitude, recipe.opts, hrnd) };
    });
    return { key: `m${mass}`, label: `m = ${mass} GeV`, value: mass, templates: hypothesisTemplates, effects };
  });

  const model: ExchangeModelInput = {
    format: 'plumbline.model',
    version: 2,
    name: 'Vireon search in flare pairs',
    signalStrength: { start: 1, min: -10, max: 20 },
    regions: regions.map((r) => ({
      key: r.key,
      label: r.label,
      role: r.role,
      observable: { name: 'm(flare pair)', unit: 'GeV' },
      edges: edgesOf(r.lo, r.hi, r.bins),
      observed: observed.get(r.key),
    })),
    processes,
    floatingNorms: [
      { key: 'k_continuum', label: 'Continuum normalisation', start: 1, min: 0, max: 10, targets: pairs(['continuum']) },
      { key: 'k_showerpair', label: 'Shower-pair normalisation', start: 1, min: 0, max: 10, targets: pairs(['showerpair']) },
    ],
    templates,
    systematics,
    signalHypotheses: { parameter: { name: 'mass', unit: 'GeV' }, points },
  };

  const entries: Record<string, DemoEntryMeta> = Object.fromEntries(
    sys.map((s) => [
      s.key,
      {
        owner: s.owner,
        state: s.state,
        justification: `Prescription of the LANTERN ${s.group} working group, note LTN-${(1000 + s.key.length * 37).toString()}.`,
        references: [`https://notes.lantern.example/ltn/${1000 + s.key.length * 37}`],
      },
    ]),
  );

  return {
    slug: 'vireon-search',
    name: 'Vireon search in flare pairs',
    description: 'Search for a narrow resonance in the flare-pair mass spectrum with the 2026 LANTERN data. Blinded: signal-region data stay hidden until a convener approves unblinding.',
    blinded: true,
    plotLabels: { experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' },
    members: [
      { email: 'mira@lantern.example', role: 'convener' },
      { email: 'otto@lantern.example', role: 'analyst' },
      { email: 'juno@lantern.example', role: 'contact' },
      { email: 'pim@lantern.example', role: 'contact' },
      { email: 'rafe@lantern.example', role: 'reader' },
    ],
    model,
    entries,
  };
}

function cascadeAnalysis(): DemoAnalysis {
  const rnd = prng(7031);
  const edges = edgesOf(0, 200, 10);
  const xs = centres(edges);
  const shape = (slope: number, total: number) => {
    const raw = xs.map((x) => Math.exp(-x / slope));
    const s = raw.reduce((a, b) => a + b, 0);
    return raw.map((v) => round((total * v) / s, 4));
  };
  const sig = shape(60, 900);
  const bkgA = shape(35, 1400);
  const bkgB = shape(120, 500);
  const crA = shape(35, 8000);
  const crB = shape(120, 600);
  const vary = (nom: number[], a: number) => ({ up: nom.map((v, i) => round(v * (1 + a * (i / 9 - 0.5)), 4)), down: nom.map((v, i) => round(v * (1 - a * (i / 9 - 0.5)), 4)) });
  const obs = (parts: number[][], mu: number[]) => parts[0].map((_, b) => rnd.poisson(parts.reduce((s, p, i) => s + p[b] * mu[i], 0)));
  const model: ExchangeModelInput = {
    format: 'plumbline.model',
    version: 1,
    name: 'Cascade production rate',
    regions: [
      { key: 'SR', label: 'Cascade-enriched selection', role: 'signal', observable: { name: 'cascade transverse energy', unit: 'GeV' }, edges, observed: obs([sig, bkgA, bkgB], [1.08, 1, 1]) },
      { key: 'CR', label: 'Cascade-depleted selection', role: 'control', observable: { name: 'cascade transverse energy', unit: 'GeV' }, edges, observed: obs([crA, crB], [1.02, 1]) },
    ],
    processes: [
      { key: 'cascade', label: 'Cascade production', kind: 'signal', colour: '#d9a441' },
      { key: 'continuum', label: 'Prompt flare continuum', kind: 'background', colour: '#2e6f95' },
      { key: 'halo', label: 'Beam halo', kind: 'background', colour: '#8e6c8a' },
    ],
    floatingNorms: [{ key: 'k_continuum', label: 'Continuum normalisation', targets: [{ region: 'SR', process: 'continuum' }, { region: 'CR', process: 'continuum' }] }],
    templates: [
      { region: 'SR', process: 'cascade', nominal: sig, variance: sig.map((v) => round(v * 0.02, 5)) },
      { region: 'SR', process: 'continuum', nominal: bkgA, variance: bkgA.map((v) => round(v * 0.03, 5)) },
      { region: 'SR', process: 'halo', nominal: bkgB },
      { region: 'CR', process: 'continuum', nominal: crA, variance: crA.map((v) => round(v * 0.01, 5)) },
      { region: 'CR', process: 'halo', nominal: crB },
    ],
    systematics: [
      { key: 'lumi', label: 'Integrated luminosity', group: 'luminosity', effects: [{ region: 'SR', process: 'cascade', kind: 'scale', up: 1.021, down: 0.979 }] },
      { key: 'cascade_eff', label: 'Cascade reconstruction efficiency', group: 'identification', effects: [{ region: 'SR', process: 'cascade', kind: 'scale', up: 1.04, down: 0.96 }] },
      { key: 'energy_scale', label: 'Cascade energy scale', group: 'calorimetry', effects: [{ region: 'SR', process: 'cascade', kind: 'shape', ...vary(sig, 0.06) }, { region: 'SR', process: 'continuum', kind: 'shape', ...vary(bkgA, 0.04) }, { region: 'CR', process: 'continuum', kind: 'shape', ...vary(crA, 0.04) }] },
      { key: 'halo_norm', label: 'Beam-halo normalisation', group: 'background modelling', effects: [{ region: 'SR', process: 'halo', kind: 'scale', up: 1.3, down: 0.75 }, { region: 'CR', process: 'halo', kind: 'scale', up: 1.3, down: 0.75 }] },
      { key: 'continuum_shape', label: 'Continuum spectrum model', group: 'background modelling', effects: [{ region: 'SR', process: 'continuum', kind: 'shape', ...vary(bkgA, 0.05) }] },
      { key: 'cascade_theory', label: 'Cascade acceptance (theory)', group: 'theory', effects: [{ region: 'SR', process: 'cascade', kind: 'scale', up: 1.03, down: 0.975 }] },
    ],
  };
  const meta = (owner: string, state: EntryState): DemoEntryMeta => ({ owner, state, justification: 'Taken from the cascade working group recommendations.', references: [] });
  return {
    slug: 'cascade-rate',
    name: 'Cascade production rate',
    description: 'Measurement of the cascade production rate relative to its prediction. Unblinded and under review.',
    blinded: false,
    plotLabels: { experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' },
    members: [
      { email: 'mira@lantern.example', role: 'convener' },
      { email: 'otto@lantern.example', role: 'analyst' },
      { email: 'juno@lantern.example', role: 'contact' },
      { email: 'rafe@lantern.example', role: 'reader' },
    ],
    model,
    entries: {
      lumi: meta('otto@lantern.example', 'accepted'),
      cascade_eff: meta('juno@lantern.example', 'accepted'),
      energy_scale: meta('juno@lantern.example', 'accepted'),
      halo_norm: meta('otto@lantern.example', 'accepted'),
      continuum_shape: meta('otto@lantern.example', 'submitted'),
      cascade_theory: meta('otto@lantern.example', 'draft'),
    },
  };
}

/**
 * The search's first round, on the 2025 pilot run: unblinded, so its scan over the masses is
 * observed, with a global significance. The data hold a modest bump near 1390 GeV (the vireon
 * drawn in at μ = 1.5 there), locally about 2–3σ: the look-elsewhere correction is what the
 * story is about.
 */
function pilotAnalysis(): DemoAnalysis {
  const rnd = prng(20250611);
  const sr = edgesOf(1000, 1600, 30);
  const cr = edgesOf(1000, 1600, 15);
  const at = (edges: number[], f: (x: number) => number, total: number) => {
    const raw = centres(edges).map(f);
    const sum = raw.reduce((a, b) => a + b, 0);
    return raw.map((v) => round((total * v) / sum, 4));
  };
  const continuum = (x: number) => Math.exp(-(x - 1000) / 170);
  const bSR = at(sr, continuum, 2400);
  const bCR = at(cr, continuum, 9000);
  // the signal at a mass: a peak of the analysis’s resolution, 20 events at 1310 GeV, fewer at low masses
  const signalAt = (mass: number) => centres(sr).map((x) => round((20 * efficiency('SR-core', mass) * peak(mass, x) * 20) / (resolution(mass) * Math.sqrt(2 * Math.PI)), 4));
  const tilt = (nom: number[], a: number) => ({ up: nom.map((v, i) => round(v * (1 + a * (i / (nom.length - 1) - 0.5)), 4)), down: nom.map((v, i) => round(v * (1 - a * (i / (nom.length - 1) - 0.5)), 4)) });
  const widen = (mass: number) => {
    const wide = centres(sr).map((x) => Math.exp(-0.5 * ((x - mass) / (1.1 * resolution(mass))) ** 2) / 1.1);
    const narrow = centres(sr).map((x) => Math.exp(-0.5 * ((x - mass) / (0.9 * resolution(mass))) ** 2) / 0.9);
    const nom = signalAt(mass);
    const base = centres(sr).map((x) => peak(mass, x));
    return { up: nom.map((v, i) => round(base[i] > 1e-12 ? (v * wide[i]) / base[i] : 0, 4)), down: nom.map((v, i) => round(base[i] > 1e-12 ? (v * narrow[i]) / base[i] : 0, 4)) };
  };
  const masses = range(25).map((i) => 1070 + 20 * i);
  const own = 1310;
  const injected = signalAt(1390);
  const observedSR = bSR.map((b, i) => rnd.poisson(b * 1.02 + 1.5 * injected[i]));
  const observedCR = bCR.map((b) => rnd.poisson(b * 1.02));
  const model: ExchangeModelInput = {
    format: 'plumbline.model',
    version: 2,
    name: 'Vireon search, 2025 pilot run',
    regions: [
      { key: 'SR', label: 'Flare pairs, tight selection', role: 'signal', observable: { name: 'm(flare pair)', unit: 'GeV' }, edges: sr, observed: observedSR },
      { key: 'CR', label: 'Flare pairs, inverted isolation', role: 'control', observable: { name: 'm(flare pair)', unit: 'GeV' }, edges: cr, observed: observedCR },
    ],
    processes: [
      { key: 'vireon', label: 'Vireon (signal)', kind: 'signal', colour: '#c0392b' },
      { key: 'continuum', label: 'Prompt flare continuum', kind: 'background', colour: '#2e6f95' },
    ],
    floatingNorms: [{ key: 'k_continuum', label: 'Continuum normalisation', targets: [{ region: 'SR', process: 'continuum' }, { region: 'CR', process: 'continuum' }] }],
    templates: [
      { region: 'SR', process: 'vireon', nominal: signalAt(own) },
      { region: 'SR', process: 'continuum', nominal: bSR, variance: bSR.map((v) => round(v * 0.01, 5)) },
      { region: 'CR', process: 'continuum', nominal: bCR },
    ],
    systematics: [
      { key: 'lumi', label: 'Integrated luminosity', group: 'luminosity', effects: [{ region: 'SR', process: 'vireon', kind: 'scale', up: 1.025, down: 0.975 }] },
      { key: 'flare_id', label: 'Flare identification', group: 'identification', effects: [{ region: 'SR', process: 'vireon', kind: 'scale', up: 1.05, down: 0.95 }] },
      { key: 'mass_resolution', label: 'Flare-pair mass resolution', group: 'calorimetry', effects: [{ region: 'SR', process: 'vireon', kind: 'shape', ...widen(own) }] },
      { key: 'continuum_slope', label: 'Continuum slope', group: 'background modelling', effects: [{ region: 'SR', process: 'continuum', kind: 'shape', ...tilt(bSR, 0.08) }, { region: 'CR', process: 'continuum', kind: 'shape', ...tilt(bCR, 0.08) }] },
    ],
    signalHypotheses: {
      parameter: { name: 'mass', unit: 'GeV' },
      points: masses.map((mass) => ({
        key: `m${mass}`,
        label: `${mass} GeV`,
        value: mass,
        templates: [{ region: 'SR', process: 'vireon', nominal: signalAt(mass) }],
        effects: [{ systematic: 'mass_resolution', region: 'SR', process: 'vireon', kind: 'shape' as const, ...widen(mass) }],
      })),
    },
  };
  const meta = (owner: string): DemoEntryMeta => ({ owner, state: 'accepted', justification: 'As for the 2025 pilot-run note.', references: [] });
  return {
    slug: 'vireon-pilot',
    name: 'Vireon search, 2025 pilot run',
    description: 'The first look for the vireon, on the 2025 pilot run: unblinded, with its scan over 25 masses and the global significance of its largest excess.',
    blinded: false,
    plotLabels: { experiment: 'LANTERN', status: 'Preliminary', luminosity: '4.2 fb⁻¹', energy: '9 TeV' },
    members: [
      { email: 'mira@lantern.example', role: 'convener' },
      { email: 'otto@lantern.example', role: 'analyst' },
      { email: 'juno@lantern.example', role: 'contact' },
      { email: 'rafe@lantern.example', role: 'reader' },
    ],
    model,
    entries: { lumi: meta('otto@lantern.example'), flare_id: meta('juno@lantern.example'), mass_resolution: meta('juno@lantern.example'), continuum_slope: meta('otto@lantern.example') },
  };
}

/** The strengths the two modes' data are drawn with (direct: μ; associated: mu_assoc). */
export const CASCADE_MODES_TRUTH = { mu: 1.1, mu_assoc: 0.8 } as const;

/**
 * Cascade production in two modes, measured together: the direct mode (multiplied by μ) and the
 * mode associated with an extra flare (its own parameter of interest, mu_assoc). Each of the two
 * selections is enriched in one mode but holds some of the other, so the two strengths come out
 * moderately anti-correlated; a cascade-depleted selection fixes the continuum's normalisation.
 * The data are drawn at μ = 1.1 and mu_assoc = 0.8.
 */
function cascadeModesAnalysis(): DemoAnalysis {
  const rnd = prng(20261204);
  const edges = edgesOf(0, 200, 10);
  const xs = centres(edges);
  const shape = (f: (x: number) => number, total: number) => {
    const raw = xs.map(f);
    const s = raw.reduce((a, b) => a + b, 0);
    return raw.map((v) => round((total * v) / s, 4));
  };
  // the direct mode is softer than the associated one, whose extra flare hardens the spectrum
  const direct = (x: number) => Math.exp(-x / 55);
  const assoc = (x: number) => (x / 40) * Math.exp(-x / 45);
  const continuum = (x: number) => Math.exp(-x / 35);
  const halo = (x: number) => 0.5 + Math.exp(-x / 120);
  type Spec = { key: string; label: string; role: 'signal' | 'control'; yields: Record<string, number> };
  const regions: Spec[] = [
    { key: 'SR-direct', label: 'Cascade without an extra flare', role: 'signal', yields: { cascade_direct: 520, cascade_assoc: 150, continuum: 1300, halo: 260 } },
    { key: 'SR-assoc', label: 'Cascade with an extra flare', role: 'signal', yields: { cascade_direct: 170, cascade_assoc: 260, continuum: 420, halo: 90 } },
    { key: 'CR', label: 'Cascade-depleted selection', role: 'control', yields: { continuum: 7000, halo: 550 } },
  ];
  const shapes: Record<string, (x: number) => number> = { cascade_direct: direct, cascade_assoc: assoc, continuum, halo };
  const nominal = new Map<string, number[]>();
  for (const r of regions) for (const [p, total] of Object.entries(r.yields)) nominal.set(`${r.key}/${p}`, shape(shapes[p], total));
  const nom = (region: string, process: string) => nominal.get(`${region}/${process}`)!;
  const where = (processes: string[], regionKeys = regions.map((r) => r.key)) => regionKeys.flatMap((region) => processes.filter((p) => nominal.has(`${region}/${p}`)).map((process) => ({ region, process })));
  const scale = (processes: string[], up: number, down: number, regionKeys?: string[]): Effect[] => where(processes, regionKeys).map((w) => ({ ...w, kind: 'scale', up, down }));
  const tilt = (processes: string[], a: number, regionKeys?: string[]): Effect[] =>
    where(processes, regionKeys).map((w) => {
      const n = nom(w.region, w.process);
      return { ...w, kind: 'shape', up: n.map((v, i) => round(v * (1 + a * (i / 9 - 0.5)), 4)), down: n.map((v, i) => round(v * (1 - a * (i / 9 - 0.5)), 4)) };
    });
  const signals = ['cascade_direct', 'cascade_assoc'];
  const systematics: ExchangeModelInput['systematics'] = [
    { key: 'lumi', label: 'Integrated luminosity', group: 'luminosity', effects: scale([...signals, 'halo'], 1.021, 0.979) },
    { key: 'cascade_eff', label: 'Cascade reconstruction efficiency', group: 'identification', effects: scale(signals, 1.04, 0.96) },
    { key: 'extra_flare_id', label: 'Extra-flare identification', group: 'identification', effects: scale(['cascade_assoc'], 1.06, 0.95) },
    { key: 'energy_scale', label: 'Cascade energy scale', group: 'calorimetry', effects: tilt([...signals, 'continuum'], 0.05) },
    { key: 'direct_theory', label: 'Direct-mode acceptance (theory)', group: 'theory', effects: scale(['cascade_direct'], 1.03, 0.97) },
    { key: 'assoc_theory', label: 'Associated-mode spectrum (theory)', group: 'theory', effects: tilt(['cascade_assoc'], 0.08, ['SR-direct', 'SR-assoc']) },
    { key: 'halo_norm', label: 'Beam-halo normalisation', group: 'background modelling', effects: scale(['halo'], 1.3, 0.75) },
    { key: 'continuum_shape', label: 'Continuum spectrum model', group: 'background modelling', effects: tilt(['continuum'], 0.06, ['SR-direct', 'SR-assoc']) },
  ];
  // the data: the two modes at their strengths, the continuum 3 % above its prediction, each bin Poisson
  const strength: Record<string, number> = { cascade_direct: CASCADE_MODES_TRUTH.mu, cascade_assoc: CASCADE_MODES_TRUTH.mu_assoc, continuum: 1.03, halo: 1 };
  const observed = (r: Spec) => xs.map((_, b) => rnd.poisson(Object.keys(r.yields).reduce((sum, p) => sum + nom(r.key, p)[b] * strength[p], 0)));
  const model: ExchangeModelInput = {
    format: 'plumbline.model',
    version: 2,
    name: 'Cascade production in two modes',
    regions: regions.map((r) => ({ key: r.key, label: r.label, role: r.role, observable: { name: 'cascade transverse energy', unit: 'GeV' }, edges, observed: observed(r) })),
    processes: [
      { key: 'cascade_direct', label: 'Cascade, direct production', kind: 'signal', colour: '#d9a441' },
      { key: 'cascade_assoc', label: 'Cascade with an extra flare', kind: 'signal', colour: '#c0392b' },
      { key: 'continuum', label: 'Prompt flare continuum', kind: 'background', colour: '#2e6f95' },
      { key: 'halo', label: 'Beam halo', kind: 'background', colour: '#8e6c8a' },
    ],
    floatingNorms: [{ key: 'k_continuum', label: 'Continuum normalisation', targets: where(['continuum']) }],
    parametersOfInterest: [{ key: 'mu_assoc', label: 'Associated-production strength', start: 1, min: -5, max: 10, targets: where(['cascade_assoc']) }],
    templates: [...nominal].map(([pair, n]) => {
      const [region, process] = pair.split('/');
      return { region, process, nominal: n, ...(process === 'halo' ? {} : { variance: n.map((v) => round(v * (process === 'continuum' ? 0.01 : 0.02), 5)) }) };
    }),
    systematics,
  };
  const meta = (owner: string, state: EntryState): DemoEntryMeta => ({ owner, state, justification: 'Taken from the cascade working group recommendations for the two-mode measurement.', references: [] });
  const otto = 'otto@lantern.example';
  const juno = 'juno@lantern.example';
  return {
    slug: 'cascade-modes',
    name: 'Cascade production in two modes',
    description: 'Measurement of the direct and the associated cascade production strengths together, with their correlation and contour. Unblinded.',
    blinded: false,
    plotLabels: { experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' },
    members: [
      { email: 'mira@lantern.example', role: 'convener' },
      { email: otto, role: 'analyst' },
      { email: juno, role: 'contact' },
      { email: 'rafe@lantern.example', role: 'reader' },
    ],
    model,
    entries: {
      lumi: meta(otto, 'accepted'),
      cascade_eff: meta(juno, 'accepted'),
      extra_flare_id: meta(juno, 'accepted'),
      energy_scale: meta(juno, 'accepted'),
      direct_theory: meta(otto, 'accepted'),
      assoc_theory: meta(otto, 'submitted'),
      halo_norm: meta(otto, 'accepted'),
      continuum_shape: meta(otto, 'accepted'),
    },
  };
}

export function demoScenario(): { accounts: DemoAccount[]; password: string; analyses: DemoAnalysis[] } {
  return { accounts: DEMO_ACCOUNTS, password: DEMO_PASSWORD, analyses: [vireonAnalysis(), cascadeAnalysis(), pilotAnalysis(), cascadeModesAnalysis()] };
}
