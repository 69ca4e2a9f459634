import { smoothRequestSchema, type SmoothPreview } from '@shared/schemas/register';
import { largestEffectPct, shapeWarnings } from '@shared/validation/variation-warnings';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findEffect, findEntry, updateEffectRow, updateEntryRow } from '../db/entries.repository';
import { indexModel, loadModelRows } from '../db/model.repository';
import { addRevision } from '../db/revisions.repository';
import { conflict, notFound, unprocessable } from '../errors';
import { notifySubmitted } from '../mail/notifications';
import { smoothVariation, type SmoothingMethod } from '../variations/smoothing';
import { assertMayEdit } from './entries.service';
import { checkUpload } from './impact-checks.service';
import { withRoles } from './recipients.service';
import { noiseWarnings, shapePrecision } from './variation-files';

/**
 * Smoothing a shape effect, on request only: the relative shift of each side is smoothed across
 * the bins of its region (variations/smoothing.ts), previewed before and after, and saved only
 * when asked. The variation as uploaded is kept with the effect, and the method, its parameters
 * and both versions go into the entry's revision; `restore` brings the upload back. An accepted
 * entry returns to review.
 */
export async function smoothEffect(ctx: AppContext, access: Access, key: string, effectId: number, body: unknown, baseUrl: string): Promise<SmoothPreview> {
  const input = smoothRequestSchema.parse(body);
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  assertMayEdit(access, entry, 'upload', 'Only the entry\u2019s owner or an analyst can smooth its variations.');
  const effect = await findEffect(ctx.db, entry.id, effectId);
  if (!effect) throw notFound(`Effect ${effectId} of "${key}"`);
  if (effect.kind !== 'shape') throw conflict('Only a shape effect can be smoothed: a scale effect has one ratio for every bin.');
  const model = indexModel(await loadModelRows(ctx.db, access.analysis.id));
  const region = model.regionById.get(effect.regionId)!;
  const process = model.processById.get(effect.processId)!;
  const template = model.template(region.key, process.key)!;
  const nominal = template.nominal;
  const before = { up: effect.up as number[], down: effect.down as number[] };
  const original = effect.smoothing?.original ?? before;
  const filled = nominal.filter((n) => n > 0).length;

  let method: SmoothingMethod | null = null;
  let params: Record<string, number> = {};
  if (input.method === 'median-hanning') {
    if (filled < 3) throw unprocessable(`Region "${region.key}" has ${filled} bins with a nominal above 0; running medians of three need at least 3`, [{ path: ['method'], message: 'needs at least 3 filled bins' }]);
    method = { method: 'median-hanning' };
  } else if (input.method === 'local-regression') {
    if (input.window > filled)
      throw unprocessable(`The window of ${input.window} bins is larger than region "${region.key}", which has ${filled} bins with a nominal above 0`, [{ path: ['window'], message: `at most ${filled}` }]);
    method = { method: 'local-regression', span: input.window / filled, iterations: input.iterations };
    params = { window: input.window, iterations: input.iterations };
  } else if (!effect.smoothing) throw conflict('This effect was never smoothed: there is nothing to restore.');

  const centres = region.edges.slice(0, -1).map((e, b) => (e + region.edges[b + 1]) / 2);
  const after = method ? { up: smoothVariation(nominal, original.up, centres, method), down: smoothVariation(nominal, original.down, centres, method) } : original;
  const warnings = shapeWarnings(nominal, after.up, after.down);
  const precision = shapePrecision(nominal, after.up, after.down, { up: effect.upShiftVariance, down: effect.downShiftVariance }, template.variance);
  if (!warnings.some((w) => w.code === 'flat-shape')) warnings.push(...noiseWarnings(precision));
  const preview: SmoothPreview = { saved: false, method: input.method, nominal, edges: region.edges, before, after, warnings, precision };
  if (!input.save) return preview;

  const backToReview = entry.state === 'accepted';
  const described = input.method === 'restore' ? 'Restored the variation as uploaded' : input.method === 'median-hanning' ? 'Smoothed with running medians of three and Hanning' : `Smoothed by local regression (window ${params.window} bins, ${params.iterations} robustness iterations)`;
  await ctx.db.transaction(async (tx) => {
    await updateEffectRow(tx, effect.id, {
      up: after.up,
      down: after.down,
      warnings,
      largestPct: largestEffectPct('shape', after.up, after.down, nominal),
      // what was computed or decided about the old shape is not about this one
      flatP: -1,
      pruned: false,
      prunedToScale: false,
      smoothing: method ? { method: input.method, params, original, by: access.userName, at: new Date().toISOString() } : null,
    });
    await updateEntryRow(tx, entry.id, { state: backToReview ? 'submitted' : entry.state, version: entry.version + 1, updatedAt: new Date() });
    await addRevision(tx, {
      analysisId: access.analysis.id,
      entryId: entry.id,
      authorId: access.userId,
      action: 'effect.smoothed',
      summary: `${described}: the shape effect on region "${region.key}", process "${process.key}".${effect.pruned ? ' It was pruned and is back in the fit.' : ''}${backToReview ? ' The entry was accepted, so it returns to review.' : ''}`,
      before: { up: before.up, down: before.down },
      after: { up: after.up, down: after.down, method: input.method, params },
    });
  });
  if (backToReview)
    await notifySubmitted(ctx, { to: await withRoles(ctx, access.analysis.id, 'convener'), baseUrl, analysis: access.analysis, entry, by: access.userName, reason: 'smoothed a variation of the accepted' });
  await checkUpload(ctx, access, entry);
  return { ...preview, saved: true };
}
