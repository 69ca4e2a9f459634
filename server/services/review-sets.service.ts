import { fitOptionsSchema, type FitOptionsInput } from '@shared/schemas/fit';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { MOVES, startReviewSetSchema, type ReviewComparison, type ReviewSetDetail, type ReviewSetSummary } from '@shared/schemas/review-sets';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { fitRowsOfSet, insertFit, storedHead, type FitRow, type StoredHead } from '../db/fits.repository';
import { findReviewSetRow, insertReviewSet, listReviewSetRows, type ReviewSetRow } from '../db/review-sets.repository';
import { notFound } from '../errors';
import { checkedFit, summaryOf } from './fits.service';
import { findVersion } from './versions.service';

/**
 * The review programme: on a model version, one action queues the standard set of linked fits a
 * convener reads side by side (docs/likelihood.md §9). While the analysis is blinded, the fits of
 * all regions hide μ, and the numbers that need μ come from Asimov datasets built on the background
 * the control regions measured.
 */
type Member = { variant: string; title: string; options: FitOptionsInput };

export function standardMembers(blinded: boolean, groups: string[]): Member[] {
  const expected = { dataset: 'asimov', expectedFrom: 'control' } as const;
  const allRegions = blinded ? ({ dataset: 'observed', hiddenMu: true } as const) : ({ dataset: 'observed', expectedFrom: 'control' } as const);
  return [
    { variant: 'control-only', title: 'Control regions only', options: { dataset: 'observed', controlOnly: true, impacts: 'none', expected: false } },
    { variant: 'expected-1', title: 'Expected at μ = 1, background from the control regions', options: { ...expected, asimovMu: 1, impacts: 'full', scan: true, breakdown: blinded } },
    { variant: 'expected-0', title: 'Expected at μ = 0 (limit), background from the control regions', options: { ...expected, asimovMu: 0, impacts: 'none', limit: true, expected: false } },
    blinded
      ? { variant: 'hidden-mu', title: 'All regions, μ hidden', options: { ...allRegions, impacts: 'none', expected: false } }
      : { variant: 'observed', title: 'Observed', options: { ...allRegions, impacts: 'full', scan: true, limit: true, breakdown: true } },
    { variant: 'stat-only', title: 'Statistics only', options: { ...(blinded ? { ...expected, asimovMu: 1 } : allRegions), statOnly: true, impacts: 'none', scan: true, expected: false } },
    ...groups.map((g) => ({ variant: `held:${g}`, title: `Held: ${g}`, options: { ...allRegions, holdGroups: [g], impacts: 'none', expected: false } as FitOptionsInput })),
  ];
}

const TITLES = new Map<string, string>();

function memberTitle(variant: string) {
  if (TITLES.has(variant)) return TITLES.get(variant)!;
  for (const m of standardMembers(true, []).concat(standardMembers(false, []))) TITLES.set(m.variant, m.title);
  return TITLES.get(variant) ?? (variant.startsWith('held:') ? `Held: ${variant.slice(5)}` : variant);
}

/** Queues the standard set on a version: every member is checked first, and the set and its fits are stored together or not at all. */
export async function startReviewSet(ctx: AppContext, access: Access, body: unknown): Promise<ReviewSetDetail> {
  const input = startReviewSetSchema.parse(body);
  const version = await findVersion(ctx, access.analysis.id, input.version);
  const model = version.model as ExchangeModel;
  const blinded = access.analysis.blinding !== 'unblinded';
  const groups = [...new Set(model.systematics.map((s) => s.group).filter((g): g is string => !!g))];
  const members = standardMembers(blinded, groups).map((m) => ({ ...m, row: checkedFit(access, version, fitOptionsSchema.parse(m.options)) }));
  const { set, fitIds } = await ctx.db.transaction(async (tx) => {
    const set = await insertReviewSet(tx, { analysisId: access.analysis.id, modelVersionId: version.id, label: input.label, blinded, createdById: access.userId });
    const fitIds: number[] = [];
    for (const m of members) fitIds.push((await insertFit(tx, { ...m.row, label: m.title, reviewSetId: set.id, variant: m.variant })).id);
    return { set, fitIds };
  });
  for (const id of fitIds) await ctx.fits.enqueue(id);
  return getReviewSet(ctx, access, set.id);
}

function summarise(access: Access, set: ReviewSetRow, version: number, by: string | null, rows: { fit: FitRow; version: number; by: string | null }[]): ReviewSetSummary {
  const members = rows.map((r) => ({ ...summaryOf(access.analysis, r.fit, r.version, r.by), variant: r.fit.variant ?? '', title: memberTitle(r.fit.variant ?? '') }));
  const active = members.some((m) => m.state === 'queued' || m.state === 'running');
  const progress = members.length ? members.reduce((s, m) => s + (m.state === 'queued' || m.state === 'running' ? m.progress : 1), 0) / members.length : 1;
  return {
    id: set.id,
    label: set.label,
    version,
    blinded: set.blinded,
    createdAt: set.createdAt.toISOString(),
    createdBy: by,
    state: active ? 'running' : members.every((m) => m.state === 'succeeded') ? 'succeeded' : 'failed',
    progress,
    members,
  };
}

export async function listReviewSets(ctx: AppContext, access: Access): Promise<ReviewSetSummary[]> {
  const sets = await listReviewSetRows(ctx.db, access.analysis.id);
  return Promise.all(sets.map(async (s) => summarise(access, s.set, s.version, s.by, await fitRowsOfSet(ctx.db, access.analysis.id, s.set.id))));
}

export async function getReviewSet(ctx: AppContext, access: Access, id: number): Promise<ReviewSetDetail> {
  const found = await findReviewSetRow(ctx.db, access.analysis.id, id);
  if (!found) throw notFound(`Review set ${id}`);
  const rows = await fitRowsOfSet(ctx.db, access.analysis.id, id);
  const summary = summarise(access, found.set, found.version, found.by, rows);
  const heads = await Promise.all(summary.members.map(async (m) => (m.state === 'succeeded' && !m.withheld ? await storedHead(ctx.db, m.id) : null)));
  return { ...summary, comparison: compare(summary, heads) };
}

/** The members side by side (the comparison the set view shows). */
export function compare(summary: ReviewSetSummary, heads: (StoredHead | null)[]): ReviewComparison {
  const rows = summary.members.map((m, i) => {
    const h = heads[i];
    const s = h?.status === 'converged' ? h.summary : null;
    const note =
      m.withheld ??
      (m.state === 'queued' || m.state === 'running'
        ? `${m.state}, ${Math.round(100 * m.progress)} %`
        : m.state !== 'succeeded'
          ? (m.failure ?? m.state)
          : h?.options.hiddenMu
            ? 'μ hidden: pulls and constraints only'
            : null);
    return {
      variant: m.variant,
      title: m.title,
      fitId: m.id,
      state: m.state,
      status: h?.status ?? null,
      note,
      mu: s ? { value: s.mu.value, error: s.mu.error, low: s.mu.interval68?.low ?? null, high: s.mu.interval68?.high ?? null, fixed: s.mu.fixed } : null,
      z: s?.discovery?.z ?? null,
      limit: s?.limit ? { observed: s.limit.observed, expected: s.limit.expected.median } : null,
      expectedFrom: h?.variant?.expectedFrom ?? (h ? 'prefit' : null),
      warnings: h?.convergence.warnings.length ?? 0,
    };
  });
  const variants = summary.members.map((m) => m.variant);
  const names = new Map<string, string | null>();
  for (const h of heads) for (const n of h?.nuisance ?? []) if (!names.has(n.name)) names.set(n.name, n.group);
  const parameters = [...names].map(([name, group]) => {
    const cells = heads.map((h) => {
      const n = h?.nuisance.find((x) => x.name === name);
      return n ? { pull: n.pull, constraint: n.constraint, fixed: n.fixed } : null;
    });
    const free = cells.filter((c): c is NonNullable<typeof c> => c !== null && !c.fixed);
    const spread = (xs: number[]) => (xs.length > 1 ? Math.max(...xs) - Math.min(...xs) : 0);
    const pullSpread = spread(free.map((c) => c.pull));
    const constraintSpread = spread(free.map((c) => c.constraint).filter((c): c is number => c !== null));
    return { name, group, cells, pullSpread, constraintSpread, moves: pullSpread > MOVES.pull || constraintSpread > MOVES.constraint };
  });
  parameters.sort((a, b) => Number(b.moves) - Number(a.moves) || b.pullSpread + b.constraintSpread - (a.pullSpread + a.constraintSpread) || a.name.localeCompare(b.name));
  const decorrelation = heads.flatMap((h, i) => (h?.variant?.decorrelation.length ? [{ variant: variants[i], fitId: summary.members[i].id, reports: h.variant.decorrelation }] : []));
  const breakdown = heads.flatMap((h, i) => (h?.variant?.breakdown ? [{ variant: variants[i], fitId: summary.members[i].id, rows: h.variant.breakdown }] : []));
  return { rows, variants, parameters, decorrelation, breakdown };
}
