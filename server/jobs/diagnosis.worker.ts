import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import { diagnoseParameter, type ParameterDiagnosisNumbers } from '../fit/diagnosis';
import { lowerThreadPriority } from '../fit/thread-priority';

/** The diagnosis of one parameter, in its own thread: a refit and a scan take seconds on a large model. */
export type DiagnosisTask = { model: ExchangeModel; options: FitOptions; parameter: string; niceness: number };

let lowered = false;

export default function diagnose({ model, options, parameter, niceness }: DiagnosisTask): ParameterDiagnosisNumbers {
  if (!lowered) {
    lowerThreadPriority(niceness);
    lowered = true;
  }
  const numbers = diagnoseParameter(model, options, parameter, 21);
  // JSON would turn a NaN into null without a word: a diagnosis with one is reported as failed
  const at = nonFiniteAt(numbers);
  return at ? { ...numbers, failure: `a number came out NaN or infinite (${at}); check the model for extreme yields` } : numbers;
}

/** The path of the first number that is NaN or infinite, or null. */
export function nonFiniteAt(value: unknown, path = ''): string | null {
  if (typeof value === 'number') return Number.isFinite(value) ? null : path || 'value';
  if (value && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) {
      const found = nonFiniteAt(v, path ? `${path}.${k}` : k);
      if (found) return found;
    }
  }
  return null;
}
