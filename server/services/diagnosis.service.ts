import { exchangeModelSchema, type ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptions } from '@shared/schemas/fit';
import { diagnosisChecksSchema, type Diagnosis, type DiagnosisClaim, type DiagnosisRegion } from '@shared/schemas/review';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { entryWithOwner } from '../db/entries.repository';
import { conflict, notFound } from '../errors';
import type { ParameterDiagnosisNumbers } from '../fit';
import { recentResults } from '../cache/results';
import { isWithheld, withheldResultMessage } from './blinding.service';
import { checkedFit, findFit, summaryOf, withheldReadBy } from './fits.service';
import { checksOf, insertFit, storedHead, storedPart, versionModel } from '../db/fits.repository';
import { findVersionById } from '../db/versions.repository';

/**
 * The diagnosis of one nuisance parameter in one succeeded fit: the engine's numbers
 * (fit/diagnosis.ts, computed in their own thread and kept per fit and parameter, since a
 * finished fit never changes) joined with the stored result (pull, impacts, correlations) and
 * the register (owner), with the blinding rule applied to the per-bin data, and a summary in
 * plain words in which every sentence names the panel element that shows its numbers.
 */
type Computed = { numbers: ParameterDiagnosisNumbers; regions: ExchangeModel['regions'] };
const computed = recentResults<Computed>(64);

const numbersFor = (ctx: AppContext, fitId: number, versionId: number, options: unknown, parameter: string) =>
  computed(ctx.db, `${fitId}\u0000${parameter}`, async () => {
    const model = exchangeModelSchema.parse(await versionModel(ctx.db, versionId));
    // the regions' labels and edges are all the panel needs of the model afterwards
    return { value: { numbers: await ctx.fits.diagnose(model, fitOptionsSchema.parse(options), parameter), regions: model.regions }, final: true };
  });

export async function diagnoseInFit(ctx: AppContext, access: Access, fitId: number, parameter: string): Promise<Diagnosis> {
  const row = await findFit(ctx, access, fitId);
  if (row.fit.state !== 'succeeded') throw conflict(`Fit ${fitId} has ${row.fit.state === 'failed' ? 'failed' : `not succeeded (${row.fit.state})`}: there is nothing to diagnose.`);
  const withheld = withheldReadBy(access.analysis, row.fit);
  if (withheld.length) throw conflict(withheldResultMessage(withheld));
  const result = (await storedHead(ctx.db, fitId))!;
  if (result.status !== 'converged') throw conflict(`Fit ${fitId} did not converge: there is nothing to diagnose.`);
  const report = result.nuisance.find((n) => n.name === parameter);
  if (!report) throw notFound(`Nuisance parameter "${parameter}" in fit ${fitId}`);
  if (report.fixed) throw conflict(`${parameter} is held in fit ${fitId}: it has no post-fit width to diagnose.`);
  const { numbers, regions: specs } = await numbersFor(ctx, fitId, row.fit.modelVersionId, row.fit.options, parameter);
  if (numbers.failure) throw conflict(`The diagnosis of ${parameter} could not be made: ${numbers.failure}.`);
  const entry = await entryWithOwner(ctx.db, access.analysis.id, parameter);
  const p = result.parameters.find((x) => x.name === parameter)!;
  const observed = result.data.dataset === 'observed';
  // a fit with μ hidden shows nothing of the signal regions, whose expected yields carry μ̂
  const hidesMu = result.options.hiddenMu === true;
  let total = numbers.information.total;
  const shown = numbers.regions.filter((r) => !hidesMu || (r.role !== 'signal' && !isWithheld(access.analysis, { key: r.region, role: r.role })));
  if (hidesMu) total = numbers.information.constraint + shown.reduce((s, r) => s + r.information, 0);
  const regions: DiagnosisRegion[] = shown.map((r) => {
    const spec = specs.find((x) => x.key === r.region)!;
    const hidden = observed && isWithheld(access.analysis, { key: r.region, role: r.role });
    return {
      region: r.region,
      label: spec.label ?? r.region,
      role: r.role,
      information: r.information,
      share: r.information / total,
      bins: r.bins.map((b) => {
        const precision = Math.sqrt(Math.max(b.expected, 0));
        return {
          bin: b.bin,
          low: spec.edges[b.bin],
          high: spec.edges[b.bin + 1],
          information: b.information,
          share: b.information / total,
          expected: b.expected,
          precision,
          up: b.up,
          down: b.down,
          ratio: precision > 0 ? Math.max(Math.abs(b.up), Math.abs(b.down)) / precision : 0,
          data: hidden ? null : b.data,
        };
      }),
    };
  });

  const { part: correlation } = await storedPart(ctx.db, fitId, 'correlation');
  const labels = new Map(result.parameters.map((x) => [x.name, x.label]));
  const correlations: Diagnosis['correlations'] = [];
  if (correlation) {
    const i = correlation.names.indexOf(parameter);
    const n = correlation.names.length;
    if (i >= 0)
      for (let j = 0; j < n; j++)
        if (j !== i) correlations.push({ name: correlation.names[j], label: labels.get(correlation.names[j]) ?? correlation.names[j], rho: correlation.values[i * n + j] });
    correlations.sort((a, b) => Math.abs(b.rho) - Math.abs(a.rho));
    correlations.splice(8);
  }

  const base = {
    value: numbers.value,
    error: p.error,
    pull: report.pull,
    constraint: report.constraint,
    overConstrained: report.overConstrained,
    threshold: result.options.overConstraintThreshold,
    information: { total, constraint: numbers.information.constraint, width: hidesMu ? 1 / Math.sqrt(total) : numbers.information.width },
    regions,
    correlations,
    scan: numbers.scan,
  };
  return {
    fit: summaryOf(access.analysis, row.fit, row.version, row.by),
    parameter: { name: parameter, label: p.label, group: report.group, entry: entry ? { key: entry.key, owner: entry.owner } : null },
    value: base.value,
    error: base.error,
    pull: base.pull,
    constraint: base.constraint,
    overConstrained: base.overConstrained,
    threshold: base.threshold,
    postfitImpact: report.postfitImpact,
    prefitImpact: report.prefitImpact,
    quickImpact: report.quickImpact,
    rank: report.rank,
    information: { ...base.information, regions },
    scan: numbers.scan,
    correlations,
    summary: summarise(parameter, base),
    warnings: result.convergence.warnings,
    checks: (await checksOf(ctx.db, access.analysis.id, fitId, parameter)).map((r) => ({ ...summaryOf(access.analysis, r.fit, r.version, r.by), variant: r.fit.variant })),
  };
}

/**
 * One click from the diagnosis: the fit again with the parameter split by region (is a control
 * region's constraint carried into the signal regions?), and with its strongest partner held at
 * its best fit (is the constraint shared?). Both link back to this fit and parameter.
 */
export async function runDiagnosisChecks(ctx: AppContext, access: Access, fitId: number, parameter: string, body: unknown): Promise<Diagnosis['checks']> {
  const { checks } = diagnosisChecksSchema.parse(body ?? {});
  const row = await findFit(ctx, access, fitId);
  if (row.fit.state !== 'succeeded') throw conflict(`Fit ${fitId} has not succeeded: there is nothing to check.`);
  const head = (await storedHead(ctx.db, fitId))!;
  const report = head.nuisance.find((n) => n.name === parameter);
  if (!report) throw notFound(`Nuisance parameter "${parameter}" in fit ${fitId}`);
  const version = await findVersionById(ctx.db, row.fit.modelVersionId);
  // a check concerns one nuisance parameter: it draws no contour (and may hold a parameter of interest)
  const base: FitOptions = { ...fitOptionsSchema.parse(row.fit.options), contour: null };
  const planned: { variant: string; label: string; options: FitOptions }[] = [];
  if (checks.includes('decorrelate')) planned.push({ variant: `decorrelate:${parameter}`, label: `${parameter} split by region`, options: { ...base, decorrelate: [{ parameter, by: 'region' }] } });
  if (checks.includes('partner')) {
    const { part: correlation } = await storedPart(ctx.db, fitId, 'correlation');
    const i = correlation ? correlation.names.indexOf(parameter) : -1;
    const n = correlation?.names.length ?? 0;
    let partner: string | null = null;
    let best = 0;
    for (let j = 0; correlation && i >= 0 && j < n; j++) {
      const rho = Math.abs(correlation.values[i * n + j]);
      if (j !== i && correlation.names[j] !== 'mu' && rho > best) [partner, best] = [correlation.names[j], rho];
    }
    if (!partner) throw conflict(`${parameter} has no correlated partner in fit ${fitId} to hold.`);
    planned.push({ variant: `partner:${partner}`, label: `${parameter} with ${partner} held`, options: { ...base, hold: [...base.hold, { parameter: partner, value: 'best' }] } });
  }
  const rows = planned.map((p) => ({ ...p, row: checkedFit(access, version, p.options) }));
  const ids = await ctx.db.transaction(async (tx) => {
    const out: number[] = [];
    for (const p of rows) out.push((await insertFit(tx, { ...p.row, label: p.label, variant: p.variant, checkOfFitId: fitId, checkOfParameter: parameter })).id);
    return out;
  });
  for (const id of ids) await ctx.fits.enqueue(id);
  return (await checksOf(ctx.db, access.analysis.id, fitId, parameter)).map((r) => ({ ...summaryOf(access.analysis, r.fit, r.version, r.by), variant: r.fit.variant }));
}

const pct = (x: number) => `${Math.round(x * 100)} %`;
const fixed = (x: number, d = 2) => x.toFixed(d);

/**
 * The plain-language summary: a few sentences, each resting on numbers the panel shows.
 * Thresholds are reading aids, stated in the words (common practice, no source): a bin set is
 * "where the information comes from" once it holds 80 % of the data's part; a width ratio
 * within 10 % of 1 means the data alone explain the constraint.
 */
function summarise(
  name: string,
  d: {
    pull: number;
    constraint: number | null;
    overConstrained: boolean;
    threshold: number;
    error: number | null;
    information: { total: number; constraint: number; width: number };
    regions: DiagnosisRegion[];
    correlations: Diagnosis['correlations'];
  },
): DiagnosisClaim[] {
  const claims: DiagnosisClaim[] = [];
  if (d.constraint !== null)
    claims.push({
      text: d.overConstrained
        ? `The fit narrows ${name} to ${fixed(d.constraint)} of its prior width: over-constrained (the flag is set below ${d.threshold}).`
        : `The fit narrows ${name} to ${fixed(d.constraint)} of its prior width, above the over-constraint threshold of ${d.threshold}.`,
      evidence: 'pull',
    });
  if (Math.abs(d.pull) >= 1) claims.push({ text: `It is pulled by ${d.pull > 0 ? '+' : ''}${fixed(d.pull)} prior widths from its nominal value.`, evidence: 'pull' });

  const dataInfo = d.information.total - d.information.constraint;
  if (dataInfo <= 0) {
    claims.push({ text: `No bin in the fit depends on ${name}: only its prior constrains it.`, evidence: 'regions' });
  } else {
    claims.push({
      text: `${pct(dataInfo / d.information.total)} of its information comes from the data and ${pct(d.information.constraint / d.information.total)} from its prior.`,
      evidence: 'regions',
    });
    // the fewest bins that hold 80 % of the data's information
    const bins = d.regions.flatMap((r) => r.bins.map((b) => ({ ...b, region: r }))).sort((a, b) => b.information - a.information);
    const chosen: typeof bins = [];
    let held = 0;
    for (const b of bins) {
      if (held >= 0.8 * dataInfo) break;
      chosen.push(b);
      held += b.information;
    }
    const byRegion = new Map<string, typeof chosen>();
    for (const b of chosen) byRegion.set(b.region.label, [...(byRegion.get(b.region.label) ?? []), b]);
    const where = [...byRegion].map(([label, bs]) => `${bs.length} bin${bs.length === 1 ? '' : 's'} of ${bs[0].region.role} region ${label}`);
    claims.push({ text: `${pct(held / d.information.total)} of the information comes from ${where.join(' and ')}.`, evidence: 'bins' });
    const top = chosen[0];
    if (top && top.precision > 0) {
      const dir = Math.abs(top.up) >= Math.abs(top.down) ? 'up' : 'down';
      claims.push({
        text:
          top.ratio >= 1
            ? `In the most informative bin (${top.region.label}, bin ${top.bin + 1}, about ${Math.round(top.expected)} expected events) the ${dir} variation is ${fixed(top.ratio, 1)} times the data's statistical precision: the data resolve this effect well, which narrows the parameter.`
            : `In the most informative bin (${top.region.label}, bin ${top.bin + 1}) the ${dir} variation is ${fixed(top.ratio, 1)} times the data's statistical precision.`,
        evidence: 'bins',
      });
    }
  }
  if (d.error !== null) {
    const ratio = d.error / d.information.width;
    claims.push({
      text:
        ratio <= 1.1
          ? `With no correlations its width would be ${fixed(d.information.width, 3)}; the fit gives ${fixed(d.error, 3)}: the data alone explain the constraint.`
          : `With no correlations its width would be ${fixed(d.information.width, 3)}; the fit gives ${fixed(d.error, 3)} (${fixed(ratio)} times wider): correlations with other parameters loosen it.`,
      evidence: 'width',
    });
  }
  const strongest = d.correlations[0];
  if (strongest && Math.abs(strongest.rho) >= 0.3)
    claims.push({ text: `It is most correlated with ${strongest.name} (ρ = ${strongest.rho >= 0 ? '+' : '−'}${fixed(Math.abs(strongest.rho))}).`, evidence: 'correlations' });
  return claims;
}
