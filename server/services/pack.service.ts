import { strToU8, zipSync } from 'fflate';
import { exportTableSchema } from '@shared/schemas/fits';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { storedResult } from '../db/fits.repository';
import { currentEffectWarnings } from '../db/pack.repository';
import { AppError, badRequest, conflict } from '../errors';
import { renderPack } from '../pack/render';
import type { PackData } from '../pack/types';
import { plotLabelsOf } from './analyses.service';
import { blindingLog } from './blinding.service';
import { blindResult, exportFit, findFit, summaryOf } from './fits.service';
import { getQuestion, listQuestions } from './questions.service';
import { findVersion } from './versions.service';

export const PACK_FORMATS = ['html', 'zip'] as const;
export type PackFormat = (typeof PACK_FORMATS)[number];

/**
 * Everything the pack shows, under the blinding rule the fit's page follows: a fit that read
 * blinded data is refused with the same reason (409), and the result is the stored one with the
 * observed counts of blinded regions removed (`blindResult`); a fit with μ hidden was stored
 * without μ. Only names and labels are read from the frozen model, never its counts.
 */
async function gather(ctx: AppContext, access: Access, fitId: number): Promise<PackData> {
  const row = await findFit(ctx, access, fitId);
  const fit = summaryOf(access.analysis, row.fit, row.version, row.by);
  if (fit.withheld) throw conflict(fit.withheld);
  if (fit.state === 'queued' || fit.state === 'running') throw conflict(`Fit ${fitId} has not finished yet; its approval pack is there when it ends.`);
  const stored = blindResult(access, await storedResult(ctx.db, fitId));
  // a fit that did not converge shows its failure and convergence report, and no number of the minimum
  const result = stored && (fit.state !== 'succeeded' || stored.status !== 'converged') ? { ...stored, parameters: [], nuisance: [], summary: null, correlation: null, groupedImpacts: [], scan: null, information: [], yields: { prefit: [], postfit: null }, data: { ...stored.data, regions: [] }, poi: undefined, contour: null } : stored;
  const version = await findVersion(ctx, access.analysis.id, row.version);
  const model = version.model as ExchangeModel;
  const warnings = new Map<string, { region: string; process: string; messages: string[] }[]>();
  for (const w of await currentEffectWarnings(ctx.db, access.analysis.id)) {
    const list = warnings.get(w.entry) ?? [];
    list.push({ region: w.region, process: w.process, messages: w.warnings.map((x) => x.message) });
    warnings.set(w.entry, list);
  }
  const listed = await listQuestions(ctx, access, {});
  const questions = await Promise.all([...listed].sort((a, b) => a.id - b.id).map((q) => getQuestion(ctx, access, q.id)));
  return {
    generatedAt: new Date().toISOString(),
    generatedBy: access.userName,
    analysis: { name: access.analysis.name, slug: access.analysis.slug, blinding: access.analysis.blinding, plotLabels: plotLabelsOf(access.analysis) },
    fit,
    version: {
      number: version.number,
      sha256: version.sha256,
      note: version.note,
      createdAt: version.createdAt.toISOString(),
      forApproval: version.forApproval,
      override: version.approvalOverride ?? null,
      register: version.register ?? null,
    },
    regions: model.regions.map((r) => ({ key: r.key, label: r.label ?? r.key, observable: r.observable?.name ?? '', unit: r.observable?.unit ?? '' })),
    processes: model.processes.map((p) => ({ key: p.key, label: p.label ?? p.key, colour: p.colour ?? null })),
    result,
    warnings,
    questions,
    blinding: await blindingLog(ctx, access),
  };
}

/** The approval pack of a fit: one self-contained HTML page, or a zip of it with the result as JSON and its tables as CSV. */
export async function approvalPack(ctx: AppContext, access: Access, fitId: number, format: unknown): Promise<{ type: string; filename: string; body: string | Buffer }> {
  const which = format === undefined ? 'html' : format;
  if (which !== 'html' && which !== 'zip') throw badRequest(`The pack's format must be one of ${PACK_FORMATS.join(', ')}.`, [{ path: ['format'], message: `one of ${PACK_FORMATS.join(', ')}` }]);
  const data = await gather(ctx, access, fitId);
  const stem = `${access.analysis.slug}-fit-${fitId}-approval-pack`;
  const html = renderPack(data);
  if (which === 'html') return { type: 'text/html; charset=utf-8', filename: `${stem}.html`, body: html };
  // the JSON and CSVs are the export route's own, under the same blinding rule
  const files: Record<string, Uint8Array> = { [`${stem}/approval-pack.html`]: strToU8(html) };
  const json = await exportFit(ctx, access, fitId, 'json', undefined);
  files[`${stem}/${json.filename}`] = strToU8(json.body);
  for (const table of exportTableSchema.options) {
    try {
      const csv = await exportFit(ctx, access, fitId, 'csv', table);
      files[`${stem}/${csv.filename}`] = strToU8(csv.body);
    } catch (e) {
      // a failed fit has no tables, a fit with μ hidden no summary or parameters: the export refuses them
      if (!(e instanceof AppError && e.status === 409)) throw e;
    }
  }
  const zipped = zipSync(files, { level: 6, mtime: new Date(data.generatedAt) });
  return { type: 'application/zip', filename: `${stem}.zip`, body: Buffer.from(zipped) };
}
