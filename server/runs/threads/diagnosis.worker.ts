import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import { diagnoseParameter, whatIf, type ParameterDiagnosisNumbers, type WhatIfInput, type WhatIfOutcome } from '../../fit';
import { lowerThreadPriority } from './thread-priority';

/**
 * The diagnosis of one parameter, and what a change of the model does to a stored fit, in a thread
 * of their own: a refit and a scan take seconds on a large model, and neither waits behind a fit.
 */
export type DiagnosisTask = { model: ExchangeModel; options: FitOptions; parameter: string; niceness: number };
export type WhatIfTask = { whatIf: WhatIfInput; niceness: number };

let lowered = false;

export default function diagnose(task: DiagnosisTask | WhatIfTask): ParameterDiagnosisNumbers | WhatIfOutcome {
  if (!lowered) {
    lowerThreadPriority(task.niceness);
    lowered = true;
  }
  if ('whatIf' in task) {
    const outcome = whatIf(task.whatIf);
    const at = nonFiniteAt(outcome);
    return at ? { ...outcome, failure: `a number came out NaN or infinite (${at}); check the model for extreme yields` } : outcome;
  }
  const { model, options, parameter } = task;
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
