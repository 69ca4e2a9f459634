import { pruningRestoreSchema, pruningRulesSchema, pruningSelectionSchema, type PrunedAs, type PruningItem, type PruningOverview, type PruningPreview } from '@shared/schemas/register';
import type { ExchangeModel } from '@shared/schemas/exchange';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { untilModelChanges } from '../cache/change-notices';
import { versionModel } from '../db/fits.repository';
import { findImpactCheck, insertImpactCheck } from '../db/impact-checks.repository';
import { effectsWithoutFlatP, prunableEffects, setFlatP, setPruned, setPruningRules } from '../db/pruning.repository';
import { addRevision } from '../db/revisions.repository';
import { notFound, unprocessable } from '../errors';
import { flatShapeP, normalisationOf, pruneModel, pruningReason, type PrunedEffect } from '../variations/pruning';
import { checkView, inBackground, referenceFit, shown } from './impact-checks.service';

/**
 * Pruning (variations/pruning.ts): the analysis's rules propose effects, an analyst previews what
 * leaving them out does to the latest shown fit (a refit of its configuration, nothing stored as
 * a fit) and prunes them with a comment; each entry's history records it, and frozen versions
 * leave them out. An analyst may also prune an effect the rules do not propose, and restore any.
 */

const rulesOf = (access: Access) => ({ belowPct: access.analysis.pruneBelowPct, shapeP: access.analysis.pruneShapeP });

/** Every effect in the fit with why the rules propose it; flat-shape p-values not yet known are computed and stored first. */
async function assessed(ctx: AppContext, access: Access) {
  const missing = await effectsWithoutFlatP(ctx.db, access.analysis.id);
  await setFlatP(
    ctx.db,
    missing.map((e) => ({
      id: e.id,
      flatP: e.kind === 'shape' && e.nominal ? flatShapeP(e.nominal, e.up as number[], e.down as number[], { up: e.upShiftVariance, down: e.downShiftVariance }, e.variance) : null,
    })),
  );
  const rules = rulesOf(access);
  return (await prunableEffects(ctx.db, access.analysis.id)).map((e) => {
    const flatP = e.flatP === -1 ? null : e.flatP;
    const item: PruningItem = {
      effectId: e.id,
      entry: { key: e.entry.key, label: e.entry.label, state: e.entry.state },
      region: e.region,
      process: e.process,
      kind: e.kind,
      largestPct: e.largestPct,
      flatP,
      reason: pruningReason(rules, { kind: e.kind, up: e.up, down: e.down, nominal: e.nominal ?? [], largestPct: e.largestPct, flatP, estimated: !e.shiftErrorsGiven }),
      pruned: e.pruned ? (e.prunedToScale ? 'normalisation' : 'dropped') : null,
      normalisation: e.kind === 'shape' && e.nominal ? normalisationOf(e.nominal, e.up as number[], e.down as number[]) : null,
    };
    return { item, entryId: e.entry.id, nominal: e.nominal ?? [], up: e.up, down: e.down };
  });
}

export async function pruningOverview(ctx: AppContext, access: Access): Promise<PruningOverview> {
  const all = await assessed(ctx, access);
  const reference = await referenceFit(ctx, access);
  return {
    rules: rulesOf(access),
    candidates: all.filter((a) => a.item.reason && !a.item.pruned).map((a) => a.item),
    pruned: all.filter((a) => a.item.pruned).map((a) => a.item),
    effects: all.filter((a) => !a.item.pruned).length,
    reference: reference ? { id: reference.fit.id, label: reference.fit.label || `Fit ${reference.fit.id}`, version: reference.version } : null,
  };
}

/** Counts per entry for the register: effects the rules propose, and effects pruned; kept until the model or the rules change. */
export function pruningCounts(ctx: AppContext, access: Access) {
  const { belowPct, shapeP } = rulesOf(access);
  return untilModelChanges(ctx.client, access.analysis.id, `pruning counts below ${belowPct} % or p above ${shapeP}`, async () => {
    const counts = new Map<string, { candidates: number; pruned: number }>();
    for (const { item } of await assessed(ctx, access)) {
      const c = counts.get(item.entry.key) ?? { candidates: 0, pruned: 0 };
      if (item.pruned) c.pruned++;
      else if (item.reason) c.candidates++;
      counts.set(item.entry.key, c);
    }
    return counts;
  });
}

export async function changePruningRules(ctx: AppContext, access: Access, body: unknown): Promise<PruningOverview> {
  const rules = pruningRulesSchema.parse(body);
  await setPruningRules(ctx.db, access.analysis.id, { pruneBelowPct: rules.belowPct, pruneShapeP: rules.shapeP });
  return pruningOverview(ctx, { ...access, analysis: { ...access.analysis, pruneBelowPct: rules.belowPct, pruneShapeP: rules.shapeP } });
}

/** The selection checked against the register: every effect known and in the fit, each pruned in a way it can be. */
async function resolveSelection(ctx: AppContext, access: Access, body: unknown) {
  const input = pruningSelectionSchema.parse(body);
  const byId = new Map((await assessed(ctx, access)).map((a) => [a.item.effectId, a]));
  const problems: { path: (string | number)[]; message: string }[] = [];
  const chosen = input.effects.flatMap((s, i) => {
    const found = byId.get(s.id);
    if (!found) {
      problems.push({ path: ['effects', i, 'id'], message: `effect ${s.id} is not an effect of an entry of this analysis in the fit` });
      return [];
    }
    const { item } = found;
    const as: PrunedAs = s.as ?? (item.reason?.rule === 'flat-shape' ? 'normalisation' : 'dropped');
    if (as === 'normalisation') {
      if (item.kind !== 'shape') problems.push({ path: ['effects', i, 'as'], message: `effect ${s.id} is a scale effect: only a shape can keep its normalisation` });
      else if (!normalisationOf(found.nominal, found.up as number[], found.down as number[]))
        problems.push({ path: ['effects', i, 'as'], message: `effect ${s.id} has no valid normalisation (its nominal or a varied template sums to 0): drop it instead` });
    }
    return [{ item, as, entryId: found.entryId }];
  });
  if (problems.length) throw unprocessable(`The selection of effects to prune has ${problems.length} problem${problems.length > 1 ? 's' : ''}: ${problems[0].message}`, problems);
  return { chosen, comment: input.comment };
}

const asPruned = ({ item, as }: Chosen): PrunedEffect => ({ systematic: item.entry.key, region: item.region, process: item.process, kind: item.kind, as });

/** Whether the model holds this effect. */
const holds = (model: ExchangeModel, p: PrunedEffect) => model.systematics.some((s) => s.key === p.systematic && s.effects.some((e) => e.region === p.region && e.process === p.process && e.kind === p.kind));

/** Starts a preview: the latest shown fit's configuration refitted on its version without the selection. */
export async function startPruningPreview(ctx: AppContext, access: Access, body: unknown): Promise<PruningPreview> {
  const { chosen } = await resolveSelection(ctx, access, body);
  const reference = await referenceFit(ctx, access);
  if (!reference) throw unprocessable('No converged fit of the analysis may be shown to compare with: run a fit (or, while blinded, a control-region or hidden-μ fit) first.');
  const selection = chosen.map((c) => ({ effectId: c.item.effectId, entry: c.item.entry.key, region: c.item.region, process: c.item.process, kind: c.item.kind, as: c.as }));
  const row = await insertImpactCheck(ctx.db, { analysisId: access.analysis.id, entryId: null, kind: 'pruning', fitId: reference.fit.id, createdById: access.userId, result: { selection, absent: [] } });
  inBackground(ctx, row.id, async () => {
    const version = (await versionModel(ctx.db, reference.fit.modelVersionId)) as ExchangeModel;
    const pruned = chosen.map(asPruned);
    const absent = chosen.filter((_, i) => !holds(version, pruned[i])).map((c) => c.item.effectId);
    const outcome = shown(await ctx.fits.whatIf({ model: pruneModel(version, pruned), options: reference.head.options, reference: reference.head, focus: [] }), reference.head);
    return { ...outcome, selection, absent };
  });
  return pruningPreview(ctx, access, row.id);
}

export async function pruningPreview(ctx: AppContext, access: Access, id: number): Promise<PruningPreview> {
  const found = await findImpactCheck(ctx.db, access.analysis.id, id, 'pruning');
  if (!found) throw notFound(`Pruning preview ${id}`);
  const stored = found.check.result as { selection?: PruningPreview['selection']; absent?: number[] } | null;
  const { focus: _focus, ...view } = checkView(access, found);
  return { id, ...view, selection: stored?.selection ?? [], absent: stored?.absent ?? [] };
}

/** Prunes the selection: marked in the register, one revision per entry, left out of the next frozen version. */
export async function pruneEffects(ctx: AppContext, access: Access, body: unknown): Promise<PruningOverview> {
  const { chosen, comment } = await resolveSelection(ctx, access, body);
  const already = chosen.filter((c) => c.item.pruned === c.as);
  if (already.length === chosen.length) throw unprocessable('Every chosen effect is already pruned that way: nothing to do.', [{ path: ['effects'], message: 'already pruned' }]);
  await ctx.db.transaction(async (tx) => {
    for (const as of ['dropped', 'normalisation'] as const)
      await setPruned(
        tx,
        chosen.filter((c) => c.as === as).map((c) => c.item.effectId),
        { pruned: true, prunedToScale: as === 'normalisation' },
      );
    for (const [entryId, list] of byEntry(chosen.filter((c) => c.item.pruned !== c.as))) {
      const what = list.map(({ item, as }) => `${describe(item)} ${as === 'normalisation' ? 'kept as its normalisation only' : 'left out'}${item.reason ? ` (${because(item)})` : ' (not proposed by the rules)'}`);
      await addRevision(tx, {
        analysisId: access.analysis.id,
        entryId,
        authorId: access.userId,
        action: 'effects.pruned',
        summary: `Pruned: ${what.join('; ')}. Frozen versions from now on ${list.length > 1 ? 'carry them so' : 'carry it so'}.${comment ? ` ${comment}` : ''}`,
        after: { effects: list.map(({ item, as }) => ({ id: item.effectId, region: item.region, process: item.process, kind: item.kind, as, reason: item.reason })), comment },
      });
    }
  });
  return pruningOverview(ctx, access);
}

/** Puts pruned effects back into the fit. */
export async function restoreEffects(ctx: AppContext, access: Access, body: unknown): Promise<PruningOverview> {
  const input = pruningRestoreSchema.parse(body);
  const byId = new Map((await assessed(ctx, access)).map((a) => [a.item.effectId, a]));
  const problems = input.effects.flatMap((id, i) =>
    !byId.get(id) ? [{ path: ['effects', i], message: `effect ${id} is not an effect of an entry of this analysis in the fit` }] : !byId.get(id)!.item.pruned ? [{ path: ['effects', i], message: `effect ${id} is not pruned` }] : [],
  );
  if (problems.length) throw unprocessable(`The effects to restore have ${problems.length} problem${problems.length > 1 ? 's' : ''}: ${problems[0].message}`, problems);
  const items = input.effects.map((id) => byId.get(id)!);
  await ctx.db.transaction(async (tx) => {
    await setPruned(tx, input.effects, { pruned: false, prunedToScale: false });
    for (const [entryId, list] of byEntry(items.map((a) => ({ item: a.item, as: a.item.pruned!, entryId: a.entryId }))))
      await addRevision(tx, {
        analysisId: access.analysis.id,
        entryId,
        authorId: access.userId,
        action: 'effects.restored',
        summary: `Back in the fit after pruning: ${list.map(({ item }) => describe(item)).join('; ')}.${input.comment ? ` ${input.comment}` : ''}`,
        after: { effects: list.map(({ item }) => item.effectId), comment: input.comment },
      });
  });
  return pruningOverview(ctx, access);
}

type Chosen = { item: PruningItem; as: PrunedAs; entryId: number };

function byEntry(list: Chosen[]) {
  const groups = new Map<number, Chosen[]>();
  for (const c of list) groups.set(c.entryId, [...(groups.get(c.entryId) ?? []), c]);
  return groups;
}

const describe = (item: PruningItem) => `the ${item.kind} effect on region "${item.region}", process "${item.process}"`;

function because(item: PruningItem) {
  const r = item.reason!;
  return r.rule === 'small' ? `at most ${r.largestPct.toPrecision(2)} % in any bin` : `flat within its noise${r.estimated ? ' (errors estimated from the template variance)' : ''}, p = ${r.p.toFixed(2)}; normalisation ${r.normalisation.up.toFixed(4)} / ${r.normalisation.down.toFixed(4)}`;
}
