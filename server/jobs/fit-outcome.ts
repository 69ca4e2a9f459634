import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitResultSchema, type FitOptions, type FitResult } from '@shared/schemas/fit';
import { fitModel, FitCancelledError, FitInputError, type FitControl } from '../fit';

export type JobOutcome = { ok: true; result: FitResult } | { ok: false; kind: 'input' | 'numeric' | 'internal'; message: string };

/**
 * A fit whose result keeps its contract: only finite numbers (one NaN or infinity and no number
 * of this fit is kept). Cancellation still rejects with FitCancelledError.
 */
export async function fitOutcome(model: ExchangeModel, options: FitOptions, control: FitControl): Promise<JobOutcome> {
  try {
    const result = await fitModel(model, options, control);
    const checked = fitResultSchema.safeParse(result);
    if (!checked.success) return { ok: false, kind: 'numeric', message: notFinite(checked.error.issues) };
    return { ok: true, result };
  } catch (e) {
    if (e instanceof FitCancelledError) throw e;
    const kind = e instanceof FitInputError ? 'input' : 'internal';
    return { ok: false, kind, message: e instanceof Error ? (kind === 'internal' ? (e.stack ?? e.message) : e.message) : String(e) };
  }
}

/** Names where the result broke its contract, e.g. "parameters.3.error" (at most three places). */
function notFinite(issues: { path: PropertyKey[]; message: string }[]) {
  const places = issues.slice(0, 3).map((i) => `${i.path.map(String).join('.') || 'result'} (${i.message})`);
  return places.join('; ') + (issues.length > 3 ? ` and ${issues.length - 3} more` : '');
}
