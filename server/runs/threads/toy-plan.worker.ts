import { workerData } from 'piscina';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import type { ToyHypothesis } from '@shared/schemas/toys';
import { FitInputError, prepareToys } from '../../fit';
import { lowerThreadPriority } from './thread-priority';

/** Thread entry: a toy run's plan (the reference refit and the generation point), off the request thread. */
lowerThreadPriority((workerData as { niceness?: number } | undefined)?.niceness ?? 0);

export default function makePlan({ model, options, hypothesis }: { model: ExchangeModel; options: FitOptions; hypothesis: ToyHypothesis }) {
  try {
    return { ok: true, plan: prepareToys(model, options, hypothesis) };
  } catch (e) {
    return { ok: false, input: e instanceof FitInputError, message: e instanceof Error ? e.message : String(e) };
  }
}
