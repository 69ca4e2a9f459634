import { z } from 'zod';
import { fitOptionsSchema, type FitOptions, type FitResult } from '@shared/schemas/fit';
import { exportFormatSchema, exportTableSchema, startFitSchema, type ExportTable, type FitComparison, type FitPartName, type FitResultHead, type FitSummary } from '@shared/schemas/fits';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findFitRow, insertFit, listFitRows, storedHead, storedPart, storedPartBytes, storedResult, type FitRow, type StoredHead } from '../db/fits.repository';
import { badRequest, conflict, notFound } from '../errors';
import { recentResults } from '../cache/results';
import { encodeJson, storedEncoding, type Encoded } from '../cache/encoded-json';
import { regionEntersFit, variantIssues } from '../fit';
import { isWithheld, withheldInFit, withheldResultMessage, type BlindingRule } from './blinding.service';
import { findVersion } from './versions.service';
import { cancelJob, fitsTable } from '../runs/run-rows';
import { untilStopped } from '../runs/local-runner';
import { escapeLatex, plainTable, pullsTable, systematicsTable, toCsv, toLatex, yieldsTable, type NoteTable } from './note-tables';


/**
 * The blinded regions whose observed counts a stored fit read (a fit made before the region's
 * data were blinded, or through a version frozen with another role): while any remain blinded,
 * none of its numbers leave the server.
 */
export function withheldReadBy(analysis: BlindingRule, fit: Pick<FitRow, 'options' | 'regionsInFit'>) {
  const options = fit.options as { dataset?: string; hiddenMu?: boolean };
  // a hidden-μ fit keeps nothing computed from μ̂ or from signal-region data (fit/variants.ts)
  if (analysis.blinding === 'unblinded' || options.dataset !== 'observed' || options.hiddenMu) return [];
  return fit.regionsInFit.filter((key) => analysis.blindedRegions.includes(key));
}

export function summaryOf(analysis: BlindingRule, fit: FitRow, version: number, createdBy: string | null): FitSummary {
  const withheld = withheldReadBy(analysis, fit);
  return {
    id: fit.id,
    label: fit.label,
    version,
    state: fit.state,
    progress: fit.progress,
    stage: fit.stage,
    options: fitOptionsSchema.parse(fit.options),
    failure: fit.failure,
    createdAt: fit.createdAt.toISOString(),
    createdBy,
    startedAt: fit.startedAt?.toISOString() ?? null,
    finishedAt: fit.finishedAt?.toISOString() ?? null,
    headline: fit.state === 'succeeded' && !withheld.length ? (fit.headline ?? null) : null,
    withheld: withheld.length ? withheldResultMessage(withheld) : null,
    checkOf: fit.checkOfFitId !== null && fit.checkOfParameter ? { fitId: fit.checkOfFitId, parameter: fit.checkOfParameter } : null,
    provenance: fit.engineVersion && fit.engineHash && fit.inputSha256 ? { engineVersion: fit.engineVersion, engineHash: fit.engineHash, inputSha256: fit.inputSha256 } : null,
    reproduces: fit.reproducesFitId,
  };
}

export async function findFit(ctx: AppContext, access: Access, id: number) {
  const row = await findFitRow(ctx.db, access.analysis.id, id);
  if (!row) throw notFound(`Fit ${id}`);
  return row;
}

/** The region keys whose observed counts are withheld now (regions blinded by the analysis). */
function withheldRegions(access: Access, result: Pick<FitResult, 'yields'>) {
  return new Set(result.yields.prefit.filter((r) => isWithheld(access.analysis, { key: r.region, role: r.role })).map((r) => r.region));
}

/** The blinding rule applied to a stored result: observed counts of blinded regions never leave while blinded. */
export function blindResult<R extends Pick<FitResult, 'data' | 'yields'>>(access: Access, result: R | null): R | null {
  if (!result || result.data.dataset !== 'observed') return result;
  const hidden = withheldRegions(access, result);
  if (!hidden.size) return result;
  return { ...result, data: { ...result.data, regions: result.data.regions.map((r) => (hidden.has(r.region) ? { ...r, values: null } : r)) } };
}

export async function listFits(ctx: AppContext, access: Access): Promise<FitSummary[]> {
  const rows = await listFitRows(ctx.db, access.analysis.id);
  return rows.map((r) => summaryOf(access.analysis, r.fit, r.version, r.by));
}

/**
 * A finished fit never changes, and its result can be megabytes: each of its responses (the
 * head, and each large part) is encoded once and kept (per database, a few fits), keyed by what
 * decides its bytes: the fit, the part, and whether blinding removes data from it.
 */
const encodedResponses = recentResults<Encoded>(24);

const headOf = ({ yields: _y, gammas: { list: _l, ...gammas }, ...head }: StoredHead): FitResultHead => ({ ...head, gammas });

export function getFitEncoded(ctx: AppContext, access: Access, id: number, part: 'head' | FitPartName = 'head'): Promise<Encoded> {
  const rule = access.analysis.blinding === 'unblinded' ? 'open' : `blind(${access.analysis.blindedRegions.join(',')})`;
  const key = `${access.analysis.id}:${id}:${rule}:${part}`;
  return encodedResponses(ctx.db, key, () => encodeFit(ctx, access, id, part));
}

/** The response bytes of a fit's head or part; not final while the fit is queued or running. */
async function encodeFit(ctx: AppContext, access: Access, id: number, part: 'head' | FitPartName): Promise<{ value: Encoded; final: boolean }> {
  const row = await findFit(ctx, access, id);
  const active = row.fit.state === 'queued' || row.fit.state === 'running';
  const summary = summaryOf(access.analysis, row.fit, row.version, row.by);
  if (active && part !== 'head') throw conflict(`Fit ${id} has not finished yet; its ${part} is there when it ends.`);
  if (part === 'head') {
    // the parts hold no observed counts: the blinding rule concerns the head's data only
    const head = active || summary.withheld ? null : blindResult(access, await storedHead(ctx.db, id));
    return { value: await encodeJson({ ...summary, result: head && headOf(head) }), final: !active };
  }
  if (summary.withheld) throw conflict(summary.withheld);
  if (part === 'correlation' || part === 'information') {
    // served as stored: the gzip bytes made where the fit ran go out as they are
    const bytes = row.fit.state === 'succeeded' || row.fit.state === 'failed' ? await storedPartBytes(ctx.db, id, part) : undefined;
    if (!bytes) throw conflict(`Fit ${id} ended without a result (${row.fit.state}).`);
    return { value: await storedEncoding(bytes), final: true };
  }
  const { stored, part: value } = await storedPart(ctx.db, id, part);
  if (!stored) throw conflict(`Fit ${id} ended without a result (${row.fit.state}).`);
  return { value: await encodeJson(value), final: true };
}

/**
 * assertVersion → assertBlindingAllows → store the fit as queued → hand it to the runner.
 * While blinded, an observed-data fit must leave out every signal region.
 */
export async function startFit(ctx: AppContext, access: Access, body: unknown): Promise<FitSummary> {
  const input = startFitSchema.parse(body);
  const version = await findVersion(ctx, access.analysis.id, input.version);
  const fit = await insertFit(ctx.db, { ...checkedFit(access, version, input.options), label: input.label });
  await ctx.fits.enqueue(fit.id);
  return summaryOf(access.analysis, fit, version.number, access.userName);
}

/**
 * A fit's row before it is stored, or a refusal that names the field: an option that names a
 * parameter, group or systematic the version does not have, every parameter held, a region to
 * leave out that does not exist, a contour of anything but two free parameters of interest, and while the analysis is blinded an observed fit of a blinded
 * region (a hidden-μ fit excepted: nothing computed from μ̂ or from those data is kept) or
 * expected numbers built on the background fitted in the signal regions.
 */
export function checkedFit(access: Access, version: { id: number; number: number; model: unknown }, options: FitOptions) {
  const model = version.model as ExchangeModel;
  const issues = variantIssues(model, options).map((i) => ({ path: ['options', ...i.path], message: i.message }));
  const unknown = options.excludeRegions.filter((k) => !model.regions.some((r) => r.key === k));
  if (unknown.length) issues.push({ path: ['options', 'excludeRegions'], message: `model version ${version.number} has no region ${unknown.map((k) => `"${k}"`).join(', ')} to leave out` });
  if (options.hiddenMu && options.dataset !== 'observed') issues.push({ path: ['options', 'hiddenMu'], message: 'μ is hidden in a fit to observed data only' });
  if (options.hiddenMu && options.controlOnly) issues.push({ path: ['options', 'hiddenMu'], message: 'a fit of the control regions alone holds μ: there is nothing to hide' });
  issues.push(...contourIssues(model, version.number, options));
  const blinded = access.analysis.blinding !== 'unblinded';
  if (blinded && options.expectedFrom === 'background')
    issues.push({ path: ['options', 'expectedFrom'], message: 'the background fitted in the signal regions may serve as the basis of expected numbers only once the analysis is unblinded; use "control" meanwhile' });
  const included = options.hiddenMu ? [] : withheldInFit(access.analysis, model.regions, options);
  if (included.length)
    issues.push({
      path: ['options', 'dataset'],
      message: `this analysis is blinded: a fit to observed data may not include a blinded region (${included.join(', ')}; a region that has been a signal region since blinding began stays blinded whatever role a version gives it). Fit the control regions only, an Asimov dataset, or hide μ, until a convener approves unblinding`,
    });
  if (issues.length) throw badRequest(`The fit cannot be started: ${issues.map((i) => i.message).join('; ')}.`, issues);
  const enters = regionEntersFit(options);
  const regionsInFit = model.regions.filter((r) => enters(r.key, r.role)).map((r) => r.key);
  return { analysisId: access.analysis.id, modelVersionId: version.id, options, regionsInFit, createdById: access.userId };
}

/**
 * options.contour names two different parameters of interest of the version's model ("mu" or a
 * declared key), both free in this fit: not on a fit of the control regions alone (μ is held), nor
 * with μ hidden (every parameter of interest is then hidden), nor with one of them held.
 */
function contourIssues(model: ExchangeModel, version: number, options: FitOptions): { path: (string | number)[]; message: string }[] {
  if (!options.contour) return [];
  const declared = ['mu', ...(model.parametersOfInterest ?? []).map((q) => q.key)];
  const named = declared.map((k) => `"${k}"`).join(', ');
  const issues: { path: (string | number)[]; message: string }[] = [];
  if (declared.length < 2)
    return [{ path: ['options', 'contour'], message: `options.contour needs two parameters of interest, and model version ${version} has only μ ("mu"): set options.contour to null, or declare more in the model file (parametersOfInterest)` }];
  options.contour.forEach((key, i) => {
    if (!declared.includes(key)) issues.push({ path: ['options', 'contour', i], message: `options.contour names "${key}", which is not a parameter of interest of model version ${version}: name two of ${named}` });
  });
  if (!issues.length && options.contour[0] === options.contour[1])
    issues.push({ path: ['options', 'contour', 1], message: `options.contour names "${options.contour[0]}" twice: name two different parameters of interest of ${named}` });
  if (options.controlOnly)
    issues.push({ path: ['options', 'contour'], message: 'options.contour asks for a contour, but a fit of the control regions alone holds μ and fits no parameter of interest: set options.contour to null, or fit all regions' });
  if (options.hiddenMu)
    issues.push({ path: ['options', 'contour'], message: 'options.contour asks for a contour, but this fit hides μ and with it every parameter of interest: set options.contour to null' });
  const held = options.contour.filter((key, i) => options.contour!.indexOf(key) === i && options.hold.some((h) => h.parameter === key));
  if (held.length)
    issues.push({ path: ['options', 'contour'], message: `options.contour names ${held.map((k) => `"${k}"`).join(' and ')}, held in this fit (options.hold): a contour needs both parameters free; hold neither, or set options.contour to null` });
  return issues;
}

export async function cancelFit(ctx: AppContext, access: Access, id: number): Promise<FitSummary> {
  const row = await findFit(ctx, access, id);
  if (row.fit.state !== 'queued' && row.fit.state !== 'running') throw conflict(`Fit ${id} has ended (${row.fit.state}); there is nothing to cancel.`);
  await cancelJob(ctx.db, fitsTable, ctx.fits, { id, state: row.fit.state, what: `Fit ${id}` }, access.userName);
  const after = await untilStopped(() => findFit(ctx, access, id), (r) => r.fit.state === 'running');
  return summaryOf(access.analysis, after.fit, after.version, after.by);
}

type Nuisance = FitResult['nuisance'][number];
const impactOf = (n: Nuisance) => (n.postfitImpact ? Math.max(Math.abs(n.postfitImpact.up ?? 0), Math.abs(n.postfitImpact.down ?? 0)) : n.quickImpact === null ? null : Math.abs(n.quickImpact));
const diff = (a: number | null | undefined, b: number | null | undefined) => ({ a: a ?? null, b: b ?? null, delta: a == null || b == null ? null : b - a });

/** Result of a converged fit, or a refusal that says why there are no numbers. */
async function convergedResult(ctx: AppContext, access: Access, id: number) {
  const row = await findFit(ctx, access, id);
  const withheld = withheldReadBy(access.analysis, row.fit);
  if (withheld.length) throw conflict(withheldResultMessage(withheld));
  const result = blindResult(access, await storedResult(ctx.db, id));
  if (row.fit.state !== 'succeeded' || !result || result.status !== 'converged')
    throw conflict(`Fit ${id} ${row.fit.state === 'failed' ? `failed (${row.fit.failure})` : `is ${row.fit.state}`}: it has no results to compare or export.`);
  return { row, result };
}

export async function compareFits(ctx: AppContext, access: Access, aId: number, bId: number): Promise<FitComparison> {
  const a = await convergedResult(ctx, access, aId);
  const b = await convergedResult(ctx, access, bId);
  const byName = (r: FitResult) => new Map(r.nuisance.map((n) => [n.name, n]));
  const na = byName(a.result);
  const nb = byName(b.result);
  const names = [...new Set([...na.keys(), ...nb.keys()])];
  const parameters = names.map((name) => {
    const x = na.get(name);
    const y = nb.get(name);
    const pull = diff(x?.pull, y?.pull);
    const constraint = diff(x?.constraint, y?.constraint);
    const impact = diff(x ? impactOf(x) : null, y ? impactOf(y) : null);
    const change = Math.max(...[pull, constraint, impact].map((d) => (d.delta === null ? 0 : Math.abs(d.delta))));
    return { name, group: (x ?? y)!.group, only: !x ? ('b' as const) : !y ? ('a' as const) : null, pull, constraint, impact, change: x && y ? change : Infinity };
  });
  parameters.sort((p, q) => q.change - p.change || p.name.localeCompare(q.name));
  return {
    a: summaryOf(access.analysis, a.row.fit, a.row.version, a.row.by),
    b: summaryOf(access.analysis, b.row.fit, b.row.version, b.row.by),
    mu: diff(a.result.summary?.mu.value, b.result.summary?.mu.value),
    muError: diff(a.result.summary?.mu.error, b.result.summary?.mu.error),
    // JSON has no infinity: a parameter present in one fit only sorts first and reports change 0
    parameters: parameters.map((p) => ({ ...p, change: Number.isFinite(p.change) ? p.change : 0 })),
  };
}

const TABLE_TITLES: Record<ExportTable, string> = {
  summary: 'Fit summary',
  parameters: 'Fitted parameters',
  nuisance: 'Nuisance parameters',
  groups: 'Grouped impacts on $\\mu$',
  correlation: 'Correlations of the fitted parameters',
  yields: 'Yields per region and process, pre- and post-fit, summed over the bins of each region',
  systematics: 'Systematic uncertainties: the range of each entry\'s effect on the yields per region, over its processes and bins, at $+1\\sigma$ (up) and $-1\\sigma$ (down)',
  pulls: 'Pulls and constraints of the nuisance parameters, and their post-fit impacts on $\\mu$, ranked',
};

/** What a table's caption adds, per table, about how its numbers were made or what is withheld. */
function captionNotes(which: ExportTable, hiddenMu: boolean): string[] {
  const notes: string[] = [];
  if (which === 'yields') notes.push('Errors added in quadrature over bins, correlations between bins neglected');
  if (which === 'yields' && hiddenMu) notes.push('post-fit yields of signal regions withheld');
  if (which === 'pulls' && hiddenMu) notes.push('impacts on $\\mu$ withheld');
  return notes;
}

/**
 * The result as JSON (a failed fit: its report), or one table as CSV or LaTeX (converged fits
 * only). Every table is built from the same redacted result as the fit's head (the blinding rule,
 * and a hidden-μ fit's result as stored without μ), and the systematics from the fit's frozen version.
 */
export async function exportFit(ctx: AppContext, access: Access, id: number, format: unknown, table: unknown): Promise<{ type: string; filename: string; body: string }> {
  const stem = `${access.analysis.slug}-fit-${id}`;
  const query = z.object({ format: exportFormatSchema.default('json') }).parse({ format });
  if (query.format === 'json') {
    const row = await findFit(ctx, access, id);
    const summary = summaryOf(access.analysis, row.fit, row.version, row.by);
    const detail = { ...summary, result: summary.withheld ? null : blindResult(access, await storedResult(ctx.db, id)) };
    return { type: 'application/json', filename: `${stem}.json`, body: JSON.stringify(detail, null, 2) };
  }
  const { table: which } = z.object({ table: exportTableSchema }).parse({ table });
  const { row, result } = await convergedResult(ctx, access, id);
  if (!result.summary && (which === 'summary' || which === 'parameters'))
    throw conflict(`Fit ${id} hides μ: its ${which} table would show what it hides. Its pulls, yields, systematics and correlations are there.`);
  const hiddenMu = Boolean((row.fit.options as { hiddenMu?: boolean }).hiddenMu);
  const name = row.fit.label ? `fit ${escapeLatex(row.fit.label)} (id ${id})` : `fit ${id}`;
  const caption = [`${TABLE_TITLES[which]}; ${name}, model version ${row.version}${hiddenMu ? ', $\\mu$ hidden' : ''}`, ...captionNotes(which, hiddenMu)].join('. ') + '.';
  const label = `tab:${stem}-${which}`;
  const s = result.summary!;
  const tables: Record<ExportTable, () => NoteTable | Promise<NoteTable>> = {
    summary: () =>
      plainTable(caption, label, [
        ['quantity', 'value', 'meaning'],
        ['mu', s.mu.value, 'best-fit signal strength'],
        ['mu_error', s.mu.error, 'sqrt(V_mumu)'],
        ['mu_68_low', s.mu.interval68?.low ?? null, 'offset to the q = 1 crossing below'],
        ['mu_68_high', s.mu.interval68?.high ?? null, 'offset to the q = 1 crossing above'],
        ['mu_95_low', s.mu.interval95?.low ?? null, 'offset to the q = 3.84 crossing below'],
        ['mu_95_high', s.mu.interval95?.high ?? null, 'offset to the q = 3.84 crossing above'],
        ['mu_stat', s.mu.stat, 'statistical part of the error'],
        ['mu_syst', s.mu.syst, 'systematic part of the error'],
        ['q0', s.discovery?.q0 ?? null, 'discovery test statistic'],
        ['z', s.discovery?.z ?? null, 'observed significance (sigma)'],
        ['p0', s.discovery?.p0 ?? null, 'one-sided p-value of the background-only hypothesis'],
        ['expected_z', s.expected?.z ?? null, 'significance expected on the pre-fit Asimov dataset'],
        ['limit_observed', s.limit?.observed ?? null, '95 % CL upper limit on mu (CLs)'],
        ['limit_expected', s.limit?.expected.median ?? null, 'median expected limit'],
        ['gof_t', s.goodnessOfFit.t, 'saturated-model test statistic'],
        ['gof_dof', s.goodnessOfFit.dof, 'degrees of freedom'],
        ['gof_p', s.goodnessOfFit.p, 'goodness-of-fit p-value'],
        ['iterations', result.convergence.iterations, 'Newton iterations'],
        ['warnings', result.convergence.warnings.join(' | '), 'convergence warnings'],
      ]),
    parameters: () => plainTable(caption, label, [['name', 'label', 'kind', 'group', 'value', 'error', 'fixed', 'at_bound'], ...result.parameters.map((p) => [p.name, p.label, p.kind, p.group, p.value, p.error, p.fixed, p.atBound])]),
    nuisance: () =>
      plainTable(caption, label, [
        ['name', 'group', 'pull', 'constraint', 'over_constrained', 'normalised_pull', 'quick_impact', 'postfit_up', 'postfit_down', 'prefit_up', 'prefit_down', 'rank'],
        ...result.nuisance.map((n) => [n.name, n.group, n.pull, n.constraint, n.overConstrained, n.normalisedPull, n.quickImpact, n.postfitImpact?.up ?? null, n.postfitImpact?.down ?? null, n.prefitImpact?.up ?? null, n.prefitImpact?.down ?? null, n.rank]),
      ]),
    groups: () => plainTable(caption, label, [['group', 'impact', 'parameters'], ...result.groupedImpacts.map((g) => [g.group, g.impact, g.parameters.join(' ')])]),
    correlation: () => {
      const c = result.correlation!;
      const n = c.names.length;
      return plainTable(caption, label, [['', ...c.names], ...c.names.map((name, i) => [name, ...c.values.slice(i * n, (i + 1) * n)])], 3);
    },
    yields: () => yieldsTable(result, caption, label),
    systematics: async () => systematicsTable((await findVersion(ctx, access.analysis.id, row.version)).model as ExchangeModel, caption, label),
    pulls: () => pullsTable(result, caption, label),
  };
  const built = await tables[which]();
  if (query.format === 'latex') return { type: 'application/x-tex; charset=utf-8', filename: `${stem}-${which}.tex`, body: toLatex(built) };
  return { type: 'text/csv; charset=utf-8', filename: `${stem}-${which}.csv`, body: toCsv(built) };
}
