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
  return diagnoseParameter(model, options, parameter, 21);
}
