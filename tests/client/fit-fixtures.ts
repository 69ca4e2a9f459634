import type { AnalysisOverview } from '@shared/schemas/api';
import { allowedActions, type MemberRole } from '@shared/permissions';
import type { FitResult, NuisanceReport } from '@shared/schemas/fit';
import type { FitDetail, FitSummary } from '@shared/schemas/fits';
import { fitOptionsSchema } from '@shared/schemas/fit';

/** A hand-made nuisance report; impacts default to a full-impacts fit. */
export function nuisance(name: string, overrides: Partial<NuisanceReport> = {}): NuisanceReport {
  return {
    name,
    group: 'jets',
    fixed: false,
    pull: 0,
    constraint: 1,
    overConstrained: false,
    normalisedPull: null,
    quickImpact: 0.01,
    postfitImpact: { up: 0.01, down: -0.01 },
    prefitImpact: { up: 0.012, down: -0.012 },
    rank: null,
    ...overrides,
  };
}

/**
 * A small converged result: μ̂ = 1.2 with an asymmetric scan interval, four nuisance parameters
 * (one over-constrained, one strongly pulled, one held), one normalisation, a 3×3 correlation of
 * μ and two parameters, and one signal region whose observed counts are withheld.
 */
export function convergedResult(overrides: Partial<FitResult> = {}): FitResult {
  const options = fitOptionsSchema.parse({ impacts: 'full', scan: true });
  return {
    status: 'converged',
    model: { name: 'demo', regionsInFit: ['SR', 'CR'] },
    options,
    convergence: { iterations: 7, decrement: 2e-12, nll: 12.5, parametersAtBound: [], clippedBins: [], conditionNumber: 345.6, warnings: ['jes_flavour has a tiny effect.'], failure: null, seconds: 0.8 },
    parameters: [
      { name: 'mu', label: 'signal strength', kind: 'poi', group: null, value: 1.2, error: 0.3, fixed: false, atBound: false },
      { name: 'k_bkg', label: 'Background normalisation', kind: 'normalisation', group: null, value: 1.05, error: 0.04, fixed: false, atBound: false },
      { name: 'jes', label: 'Jet energy scale', kind: 'nuisance', group: 'jets', value: 0.2, error: 0.4, fixed: false, atBound: false },
    ],
    nuisance: [
      nuisance('jes', { pull: 0.2, constraint: 0.4, overConstrained: true, normalisedPull: 0.218, quickImpact: -0.05, postfitImpact: { up: -0.06, down: 0.055 }, prefitImpact: { up: -0.12, down: 0.11 } }),
      nuisance('lumi', { group: 'luminosity', pull: -1.4, constraint: 0.9, normalisedPull: -3.2, quickImpact: 0.02, postfitImpact: { up: 0.02, down: -0.021 } }),
      nuisance('theory_scale', { group: 'theory', pull: 0.1, constraint: 0.95, quickImpact: 0.09, postfitImpact: { up: 0.1, down: -0.08 } }),
      nuisance('jes_flavour', { fixed: true, constraint: null, quickImpact: null, postfitImpact: null, prefitImpact: null }),
    ],
    gammas: { count: 6, maxAbsPull: 0.3, list: [] },
    correlation: { names: ['mu', 'k_bkg', 'jes'], values: [1, -0.4, 0.3, -0.4, 1, 0.1, 0.3, 0.1, 1] },
    summary: {
      mu: { value: 1.2, fixed: false, error: 0.3, interval68: { low: -0.28, high: 0.33 }, interval95: { low: -0.55, high: 0.68 }, stat: 0.25, syst: 0.166 },
      discovery: { q0: 16, z: 4, p0: 3.17e-5 },
      expected: { asimovMu: 1, q0: 9, z: 3, p0: 1.35e-3 },
      limit: null,
      goodnessOfFit: { t: 10.2, dof: 8, p: 0.25 },
    },
    groupedImpacts: [
      { group: 'jets', impact: 0.06, parameters: ['jes'] },
      { group: 'theory', impact: 0.09, parameters: ['theory_scale'] },
    ],
    scan: {
      parameter: 'mu',
      failure: null,
      bestFit: 1.2,
      error: 0.3,
      points: [0.6, 0.9, 1.2, 1.5, 1.8].map((value) => ({ value, q: ((value - 1.2) / 0.3) ** 2 })),
      crossings68: { low: 0.92, high: 1.53 },
      crossings95: { low: 0.65, high: 1.88 },
    },
    information: [{ parameter: 'jes', total: 6.25, constraint: 1, width: 0.4, regions: [{ region: 'CR', information: 5.25, bins: [{ bin: 0, information: 4 }, { bin: 1, information: 1.25 }] }] }],
    yields: {
      prefit: [
        { region: 'SR', role: 'signal', inFit: true, edges: [0, 1, 2], processes: [{ process: 'bkg', values: [10, 5], errors: [1, 1] }, { process: 'sig', values: [2, 1], errors: [0.2, 0.1] }], total: { values: [12, 6], errors: [1.5, 1] } },
        { region: 'CR', role: 'control', inFit: true, edges: [0, 1, 2], processes: [{ process: 'bkg', values: [100, 50], errors: [5, 3] }], total: { values: [100, 50], errors: [5, 3] } },
      ],
      postfit: [
        { region: 'SR', role: 'signal', inFit: true, edges: [0, 1, 2], processes: [{ process: 'bkg', values: [10.5, 5.2], errors: [0.5, 0.4] }, { process: 'sig', values: [2.4, 1.2], errors: [0.5, 0.3] }], total: { values: [12.9, 6.4], errors: [0.7, 0.5] } },
        { region: 'CR', role: 'control', inFit: true, edges: [0, 1, 2], processes: [{ process: 'bkg', values: [104, 52], errors: [2, 1.5] }], total: { values: [104, 52], errors: [2, 1.5] } },
      ],
    },
    data: { dataset: 'observed', asimovMu: null, regions: [{ region: 'SR', inFit: true, values: null }, { region: 'CR', inFit: true, values: [103, 53] }] },
    ...overrides,
  };
}

export function fitSummary(overrides: Partial<FitSummary> = {}): FitSummary {
  return {
    id: 7,
    label: 'Observed, full impacts',
    version: 2,
    state: 'succeeded',
    progress: 1,
    stage: 'done',
    options: fitOptionsSchema.parse({ impacts: 'full', scan: true }),
    failure: null,
    createdAt: '2026-03-01T10:00:00Z',
    createdBy: 'Otto Brannholm',
    startedAt: '2026-03-01T10:00:01Z',
    finishedAt: '2026-03-01T10:00:30Z',
    provenance: { engineVersion: '0.1.0', engineHash: 'a'.repeat(64), inputSha256: 'b'.repeat(64) },
    reproduces: null,
    headline: { mu: 1.2, muError: 0.3, z: 4, warnings: 1 },
    withheld: null,
    checkOf: null,
    ...overrides,
  };
}

/** A fit with its whole stored result, as the server keeps it (it serves the head and the parts apart). */
export type StoredFit = Omit<FitDetail, 'result'> & { result: FitResult | null };

export function fitDetail(overrides: Partial<StoredFit> = {}): StoredFit {
  return { ...fitSummary(), result: convergedResult(), ...overrides };
}


/** The overview of an analysis as a member of `role` sees it. */
export function overview(role: MemberRole, blinding: AnalysisOverview['analysis']['blinding'] = 'blinded'): AnalysisOverview {
  return {
    analysis: { slug: 'demo', name: 'Demo', description: '', blinding, signalStrength: { start: 1, min: -5, max: 10 }, overConstraintThreshold: 0.5, createdAt: '2026-01-01T00:00:00Z', plotLabels: { experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' } },
    role,
    permissions: allowedActions(role, false),
    counts: { regions: 2, processes: 2, members: 3, entries: 4, entriesByState: { draft: 0, submitted: 0, accepted: 4, sent_back: 0, retired: 0 } },
    modelVersion: null,
    latestFit: null,
    openQuestions: 0,
  };
}

/**
 * The small result with a second parameter of interest, mu_assoc (label "Associated strength"):
 * μ̂ = 1.2 ± 0.3 and mu_assoc = 0.8 ± 0.5 with ρ = −0.42, each with its own impacts (lumi moves
 * mu_assoc most, where theory_scale moves μ most), a scan of mu_assoc, and their contour.
 */
export function twoPoiResult(overrides: Partial<FitResult> = {}): FitResult {
  const base = convergedResult();
  const ellipse = (q: number, n = 24) => Array.from({ length: n + 1 }, (_, i) => [1.2 + 0.3 * Math.sqrt(q) * Math.cos((2 * Math.PI * i) / n), 0.8 + 0.5 * Math.sqrt(q) * Math.sin((2 * Math.PI * i) / n)] as [number, number]);
  const grid = (lo: number, hi: number, n: number) => Array.from({ length: n }, (_, i) => lo + ((hi - lo) * i) / (n - 1));
  return {
    ...base,
    options: { ...base.options, contour: ['mu', 'mu_assoc'] },
    poi: {
      list: [
        { name: 'mu', label: 'signal strength', value: 1.2, fixed: false, error: 0.3, interval68: { low: 0.92, high: 1.53 }, interval95: { low: 0.65, high: 1.88 }, scan: null, impacts: null },
        {
          name: 'mu_assoc',
          label: 'Associated strength',
          value: 0.8,
          fixed: false,
          error: 0.5,
          interval68: { low: 0.31, high: 1.32 },
          interval95: { low: -0.2, high: null },
          scan: {
            parameter: 'mu_assoc',
            failure: null,
            bestFit: 0.8,
            error: 0.5,
            points: [-0.2, 0.3, 0.8, 1.3, 1.8].map((value) => ({ value, q: ((value - 0.8) / 0.5) ** 2 })),
            crossings68: { low: 0.31, high: 1.32 },
            crossings95: { low: -0.2, high: null },
          },
          impacts: [
            { name: 'jes', quickImpact: 0.01, postfitImpact: { up: 0.02, down: -0.02 }, prefitImpact: { up: 0.03, down: -0.03 }, rank: 3 },
            { name: 'lumi', quickImpact: 0.2, postfitImpact: { up: 0.25, down: -0.24 }, prefitImpact: { up: 0.27, down: -0.26 }, rank: 1 },
            { name: 'theory_scale', quickImpact: 0.05, postfitImpact: { up: 0.06, down: -0.05 }, prefitImpact: { up: 0.07, down: -0.06 }, rank: 2 },
            { name: 'jes_flavour', quickImpact: null, postfitImpact: null, prefitImpact: null, rank: null },
          ],
        },
      ],
      correlation: { names: ['mu', 'mu_assoc'], values: [1, -0.42, -0.42, 1] },
    },
    contour: {
      parameters: ['mu', 'mu_assoc'],
      failure: null,
      bestFit: [1.2, 0.8],
      errors: [0.3, 0.5],
      a: grid(0.2, 2.2, 11),
      b: grid(-1, 2.6, 11),
      q: grid(0.2, 2.2, 11).map(() => grid(-1, 2.6, 11).map(() => 1)),
      levels: [
        { cl: 0.6827, q: 2.3, lines: [ellipse(2.3)] },
        { cl: 0.95, q: 5.99, lines: [ellipse(5.99)] },
      ],
      points: { converged: 119, failed: 2 },
    },
    ...overrides,
  };
}
