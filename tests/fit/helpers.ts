import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import { expect } from 'vitest';

/** |actual − expected| ≤ abs + rel·|expected|. */
export function expectClose(actual: number | null | undefined, expected: number, rel = 1e-9, abs = 0): void {
  expect(actual).not.toBeNull();
  expect(actual).not.toBeUndefined();
  const diff = Math.abs((actual as number) - expected);
  const limit = abs + rel * Math.abs(expected);
  if (!(diff <= limit)) throw new Error(`expected ${actual} to be within ${limit.toExponential(2)} of ${expected} (off by ${diff.toExponential(2)})`);
}

interface CountingSpec {
  s: number;
  b: number;
  n: number;
  /** Optional control region: background scaled by tau, observed m; background floats. */
  tau?: number;
  m?: number;
}

/** One-bin counting experiment; with tau, a control region measures the floating background. */
export function countingModel({ s, b, n, tau, m }: CountingSpec, overrides: Partial<ExchangeModelInput> = {}): ExchangeModel {
  const regions: ExchangeModelInput['regions'] = [
    { key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [n] },
  ];
  const templates: ExchangeModelInput['templates'] = [
    { region: 'SR', process: 'sig', nominal: [s] },
    { region: 'SR', process: 'bkg', nominal: [b] },
  ];
  const floatingNorms: ExchangeModelInput['floatingNorms'] = [];
  if (tau !== undefined) {
    regions.push({ key: 'CR', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [m ?? tau * b] });
    templates.push({ region: 'CR', process: 'bkg', nominal: [tau * b] });
    floatingNorms.push({ key: 'k', start: 1, min: 0, max: 10, targets: [{ region: 'SR', process: 'bkg' }, { region: 'CR', process: 'bkg' }] });
  }
  return exchangeModelSchema.parse({
    format: 'plumbline.model',
    version: 1,
    name: 'counting',
    signalStrength: { start: 1, min: -10, max: 20 },
    regions,
    processes: [
      { key: 'sig', kind: 'signal' },
      { key: 'bkg', kind: 'background' },
    ],
    floatingNorms,
    templates,
    systematics: [],
    ...overrides,
  });
}
