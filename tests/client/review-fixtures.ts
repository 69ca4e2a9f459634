import type { BlindingLog, Diagnosis, DiagnosisBin, QuestionDetail, QuestionSummary } from '@shared/schemas/review';
import { fitSummary } from './fit-fixtures';

function bin(bin: number, o: Partial<DiagnosisBin>): DiagnosisBin {
  const expected = o.expected ?? 100;
  const precision = Math.sqrt(expected);
  const up = o.up ?? 1;
  const down = o.down ?? -1;
  return { bin, low: bin, high: bin + 1, information: 0, share: 0, expected, precision, up, down, ratio: Math.max(Math.abs(up), Math.abs(down)) / precision, data: expected, ...o };
}

/**
 * The diagnosis of `jes` in fit 7 (fit-fixtures' converged result): constraint 0.4, width 0.4
 * with no correlations, most of its information from the control region's first bin.
 */
export function diagnosis(overrides: Partial<Diagnosis> = {}): Diagnosis {
  return {
    fit: fitSummary(),
    parameter: { name: 'jes', label: 'Jet energy scale', group: 'jets', entry: { key: 'jes', owner: 'Pim Sorel' } },
    value: 0.2,
    error: 0.44,
    pull: 0.2,
    constraint: 0.44,
    overConstrained: true,
    threshold: 0.5,
    postfitImpact: { up: -0.06, down: 0.055 },
    prefitImpact: { up: -0.12, down: 0.11 },
    quickImpact: -0.05,
    rank: 2,
    information: {
      total: 6.25,
      constraint: 1,
      width: 0.4,
      regions: [
        { region: 'SR', label: 'Signal region', role: 'signal', information: 0.25, share: 0.04, bins: [bin(0, { information: 0.15, share: 0.024, expected: 12.9, data: null }), bin(1, { information: 0.1, share: 0.016, expected: 6.4, data: null })] },
        { region: 'CR', label: 'Control region', role: 'control', information: 5, share: 0.8, bins: [bin(0, { information: 4, share: 0.64, expected: 104, up: 31.2, down: -26 }), bin(1, { information: 1, share: 0.16, expected: 52, up: 7.2, down: -7 })] },
      ],
    },
    scan: {
      parameter: 'jes',
      failure: null,
      bestFit: 0.2,
      error: 0.44,
      points: [-0.7, -0.25, 0.2, 0.65, 1.1].map((value) => ({ value, q: ((value - 0.2) / 0.44) ** 2 })),
      crossings68: { low: -0.24, high: 0.64 },
      crossings95: null,
    },
    correlations: [
      { name: 'k_bkg', label: 'Background normalisation', rho: -0.62 },
      { name: 'lumi', label: 'Luminosity', rho: 0.31 },
    ],
    summary: [
      { text: 'jes is constrained to 0.44 of its prior width.', evidence: 'pull' },
      { text: 'The data alone would leave it a width of 0.40, close to the fitted 0.44.', evidence: 'width' },
      { text: '80 % of its information comes from the control region.', evidence: 'regions' },
      { text: 'In bin 1 of the control region its effect is 3.1 times the data’s precision.', evidence: 'bins' },
      { text: 'The likelihood scan is close to a parabola.', evidence: 'scan' },
      { text: 'It is anti-correlated with k_bkg (ρ = −0.62).', evidence: 'correlations' },
    ],
    warnings: ['jes_flavour has a tiny effect.'],
    checks: [],
    ...overrides,
  };
}

export function questionSummary(overrides: Partial<QuestionSummary> = {}): QuestionSummary {
  return {
    id: 11,
    about: { kind: 'parameter', label: 'parameter jes', region: null, bin: null, version: null },
    entry: { key: 'jes', label: 'Jet energy scale', group: 'jets', owner: { id: 4, name: 'Pim Sorel' } },
    fit: { id: 7, label: 'Observed, full impacts' },
    title: 'Why is jes constrained to 0.44?',
    state: 'open',
    author: { id: 2, name: 'Mira Quell' },
    answers: 0,
    createdAt: '2026-03-02T09:00:00Z',
    lastActivity: '2026-03-02T09:00:00Z',
    resolvedBy: null,
    resolvedAt: null,
    ...overrides,
  };
}

export function questionDetail(overrides: Partial<QuestionDetail> = {}): QuestionDetail {
  return { ...questionSummary(), body: 'The control region seems to carry it all. Is the 30 % halo variation right?', thread: [], ...overrides };
}

export function blindingLog(overrides: Partial<BlindingLog> = {}): BlindingLog {
  return { state: 'blinded', approvalsRequired: 1, approvalsGiven: 0, events: [], ...overrides };
}
