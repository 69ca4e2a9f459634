import { fitOptionsSchema } from '@shared/schemas/fit';
import type { FitSummary, Reproduction } from '@shared/schemas/fits';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { insertFit, storedResult } from '../db/fits.repository';
import { conflict, notFound } from '../errors';
import { resultDifferences } from '../runs/engine-identity';
import { withheldResultMessage } from './blinding.service';
import { blindResult, checkedFit, findFit, summaryOf, withheldReadBy } from './fits.service';
import { findVersion } from './versions.service';

/**
 * Reproduce: the same version and options run again, as a new fit that names the one it
 * reproduces. The options go through the same checks as a new fit's (the blinding rules of today
 * apply: a fit allowed before unblinding was revoked is refused now).
 */
export async function reproduceFit(ctx: AppContext, access: Access, id: number): Promise<FitSummary> {
  const row = await findFit(ctx, access, id);
  if (row.fit.state === 'queued' || row.fit.state === 'running') throw conflict(`Fit ${id} has not ended yet; reproduce it once it has.`);
  if (row.fit.state === 'cancelled') throw conflict(`Fit ${id} was cancelled and has no result to reproduce; start it again instead.`);
  const version = await findVersion(ctx, access.analysis.id, row.version);
  const options = fitOptionsSchema.parse(row.fit.options);
  const label = `Reproduces fit ${id}${row.fit.label ? `: ${row.fit.label}` : ''}`.slice(0, 200);
  const fit = await insertFit(ctx.db, { ...checkedFit(access, version, options), label, reproducesFitId: id });
  await ctx.fits.enqueue(fit.id);
  return summaryOf(access.analysis, fit, version.number, access.userName);
}

/** Wall-clock times: the only numbers a rerun may change. */
const TIMES = new Set(['convergence.seconds']);

/** A rerun against the fit it reproduces: whether engine and input are the same, and every place their results differ. */
export async function getReproduction(ctx: AppContext, access: Access, id: number): Promise<Reproduction> {
  const rerun = await findFit(ctx, access, id);
  const of = rerun.fit.reproducesFitId;
  if (of === null) throw notFound(`A reproduction of another fit by fit ${id}`);
  const original = await findFit(ctx, access, of);
  for (const r of [original, rerun]) {
    if (r.fit.state === 'queued' || r.fit.state === 'running') throw conflict(`Fit ${r.fit.id} has not ended yet; the comparison is there when both have.`);
    const withheld = withheldReadBy(access.analysis, r.fit);
    if (withheld.length) throw conflict(withheldResultMessage(withheld));
  }
  const [a, b] = await Promise.all([original, rerun].map(async (r) => blindResult(access, await storedResult(ctx.db, r.fit.id))));
  const found = resultDifferences(a, b, (path) => TIMES.has(path));
  return {
    fitId: id,
    of,
    sameEngine: !!rerun.fit.engineHash && rerun.fit.engineHash === original.fit.engineHash && rerun.fit.engineVersion === original.fit.engineVersion,
    sameInput: !!rerun.fit.inputSha256 && rerun.fit.inputSha256 === original.fit.inputSha256,
    compared: found.compared,
    count: found.count,
    differences: found.listed,
  };
}
