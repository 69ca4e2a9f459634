import { randomInt } from 'node:crypto';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { hypothesisScanResultSchema, startHypothesisScanSchema, storedScanOptions, type HypothesisScan } from '@shared/schemas/hypothesis-scan';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findHypothesisScanRow, insertHypothesisScan, listHypothesisScanRows, type HypothesisScanRow } from '../db/hypothesis-scans.repository';
import { badRequest, conflict, notFound } from '../errors';
import { regionEntersFit } from '../fit';
import { cancelJob, hypothesisScansTable } from '../runs/run-rows';
import { untilStopped } from '../runs/local-runner';
import { isWithheld, withheldInFit, type BlindingRule } from './blinding.service';
import { findVersion } from './versions.service';

/**
 * Scans over the signal hypotheses of a frozen model version (docs/fit-engine.md, "Scan over
 * signal hypotheses"). While the analysis is blinded only the expected scan may run: its
 * Asimov datasets are built on the control regions' fit, and the runner gives the engine no
 * observed count of any other region (runs/hypothesis-scan-runner.ts, modelForScan).
 */

/** The regions an observed scan read, while the analysis is not unblinded: its numbers stay on the server. */
function withheldBy(analysis: BlindingRule, scan: Pick<HypothesisScanRow, 'options' | 'regionsInFit'>): string[] {
  const { options } = storedScanOptions(scan.options);
  if (analysis.blinding === 'unblinded' || options.dataset !== 'observed') return [];
  return scan.regionsInFit;
}

function scanOf(analysis: BlindingRule, row: Omit<HypothesisScanRow, 'result'> & { result?: unknown }, version: number, createdBy: string | null): HypothesisScan {
  const withheld = withheldBy(analysis, row);
  const { options, hypotheses } = storedScanOptions(row.options);
  return {
    id: row.id,
    version,
    label: row.label,
    options,
    hypotheses,
    state: row.state,
    progress: row.progress,
    stage: row.stage,
    failure: row.failure,
    withheld: withheld.length ? `This scan was fitted to the observed data of ${withheld.map((k) => `"${k}"`).join(', ')}; its results are withheld until a convener approves unblinding.` : null,
    createdAt: row.createdAt.toISOString(),
    createdBy,
    startedAt: row.startedAt?.toISOString() ?? null,
    finishedAt: row.finishedAt?.toISOString() ?? null,
    // never a number from a scan that did not succeed, nor from blinded data
    result: row.state === 'succeeded' && row.result && !withheld.length ? hypothesisScanResultSchema.parse(row.result) : null,
  };
}

export async function listHypothesisScans(ctx: AppContext, access: Access): Promise<HypothesisScan[]> {
  const rows = await listHypothesisScanRows(ctx.db, access.analysis.id);
  return rows.map((r) => scanOf(access.analysis, r.scan, r.version, r.by));
}

async function findScan(ctx: AppContext, access: Access, id: number) {
  const row = await findHypothesisScanRow(ctx.db, access.analysis.id, id);
  if (!row) throw notFound(`Scan ${id}`);
  return row;
}

export async function getHypothesisScan(ctx: AppContext, access: Access, id: number): Promise<HypothesisScan> {
  const row = await findScan(ctx, access, id);
  return scanOf(access.analysis, row.scan, row.version, row.by);
}

/**
 * Starts a scan, or refuses naming the field: a version without signal hypotheses, an observed
 * scan while the analysis is blinded, an expected scan with no control region to build its
 * Asimov datasets on, toys asked of an expected scan (the global significance needs the observed one).
 */
export async function startHypothesisScan(ctx: AppContext, access: Access, body: unknown): Promise<HypothesisScan> {
  const input = startHypothesisScanSchema.parse(body);
  const version = await findVersion(ctx, access.analysis.id, input.version);
  const model = version.model as ExchangeModel;
  const options = input.options;
  const issues: { path: (string | number)[]; message: string }[] = [];
  const hypotheses = model.signalHypotheses?.points.length ?? 0;
  if (hypotheses === 0)
    issues.push({ path: ['version'], message: `model version ${version.number} declares no signal hypotheses: add them on the model screen (Signal hypotheses) and freeze a new version` });
  const blindedRead = withheldInFit(access.analysis, model.regions, { dataset: options.dataset === 'observed' ? 'observed' : 'asimov', controlOnly: false, excludeRegions: [] });
  if (options.dataset === 'observed' && blindedRead.length)
    issues.push({
      path: ['options', 'dataset'],
      message: `this analysis is blinded: an observed scan would read the blinded region${blindedRead.length > 1 ? 's' : ''} ${blindedRead.map((k) => `"${k}"`).join(', ')}. Run the expected scan until a convener approves unblinding`,
    });
  if (options.dataset === 'expected' && (options.upcrossingToys > 0 || options.trialsToys > 0))
    issues.push({ path: ['options', options.upcrossingToys > 0 ? 'upcrossingToys' : 'trialsToys'], message: 'the global significance is computed for the observed scan only: leave the toys at 0 for an expected scan' });
  const enters = regionEntersFit({ controlOnly: options.dataset === 'expected', excludeRegions: [] });
  const regionsInFit = model.regions.filter((r) => enters(r.key, r.role) && (options.dataset === 'observed' || !isWithheld(access.analysis, r))).map((r) => r.key);
  if (options.dataset === 'expected' && regionsInFit.length === 0)
    issues.push({ path: ['options', 'dataset'], message: `model version ${version.number} has no control region whose data may be read: the expected scan builds its Asimov datasets on the control regions' fit` });
  if (issues.length) throw badRequest(`The scan cannot be started: ${issues.map((i) => i.message).join('; ')}.`, issues);
  const seed = body && typeof body === 'object' && 'options' in body && (body.options as { seed?: unknown })?.seed !== undefined ? options.seed : randomInt(0, 2 ** 31 - 1);
  const row = await insertHypothesisScan(ctx.db, {
    analysisId: access.analysis.id,
    modelVersionId: version.id,
    label: input.label,
    options: { ...options, seed, hypotheses },
    regionsInFit,
    createdById: access.userId,
  });
  await ctx.scans.enqueue(row.id);
  return scanOf(access.analysis, row, version.number, access.userName);
}

export async function cancelHypothesisScan(ctx: AppContext, access: Access, id: number): Promise<HypothesisScan> {
  const row = await findScan(ctx, access, id);
  if (row.scan.state !== 'queued' && row.scan.state !== 'running') throw conflict(`Scan ${id} has ended (${row.scan.state}); there is nothing to cancel.`);
  await cancelJob(ctx.db, hypothesisScansTable, ctx.scans, { id, state: row.scan.state, what: `Scan ${id}` }, access.userName);
  const after = await untilStopped(() => findScan(ctx, access, id), (r) => r.scan.state === 'running');
  return scanOf(access.analysis, after.scan, after.version, after.by);
}
