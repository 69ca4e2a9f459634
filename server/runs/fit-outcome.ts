import { gzipSync } from 'node:zlib';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitResultSchema, type FitOptions, type FitResult } from '@shared/schemas/fit';
import { fitModel, FitCancelledError, FitInputError, hideMu, type FitControl } from '../fit';

/** The parts of a result stored apart from the rest (db/fits.repository.ts). */
export const LARGE_PARTS = ['correlation', 'information'] as const;
export type LargePart = (typeof LARGE_PARTS)[number];

/**
 * A result as it is stored: everything but the two largest parts, which are JSON compressed with
 * gzip. Made where the fit ran (the fit's own thread, or a worker process), so that the web
 * server never serialises or compresses megabytes on its request thread.
 */
export type StorableResult = { result: Omit<FitResult, LargePart>; parts: Record<LargePart, Uint8Array> };

export function storable(result: FitResult): StorableResult {
  const { correlation, information, ...rest } = result;
  const pack = (value: unknown) => new Uint8Array(gzipSync(JSON.stringify(value), { level: 6 }));
  return { result: rest, parts: { correlation: pack(correlation), information: pack(information) } };
}

export type JobOutcome = { ok: true; stored: StorableResult } | { ok: false; kind: 'input' | 'numeric' | 'internal'; message: string };

/**
 * A fit whose result keeps its contract: only finite numbers (one NaN or infinity and no number
 * of this fit is kept). Cancellation still rejects with FitCancelledError.
 */
export async function fitOutcome(model: ExchangeModel, options: FitOptions, control: FitControl): Promise<JobOutcome> {
  try {
    const computed = await fitModel(model, options, control);
    const checked = fitResultSchema.safeParse(computed);
    if (!checked.success) return { ok: false, kind: 'numeric', message: notFinite(checked.error.issues) };
    // a fit with μ hidden keeps nothing computed from μ̂ or from signal-region data, from here on
    const result = options.hiddenMu ? hideMu(computed) : computed;
    return { ok: true, stored: storable(result) };
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
