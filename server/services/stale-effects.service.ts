import type { StaleEffect } from '@shared/schemas/approval';
import { largestEffectPct, shapeWarnings } from '@shared/validation/variation-warnings';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { updateEntryRow } from '../db/entries.repository';
import { addRevision, type DbOrTx } from '../db/revisions.repository';
import type { EffectWarning } from '../db/schema';
import { shapeEffectsOn, staleEffectsOf, updateEffect } from '../db/stale-effects.repository';
import { badRequest } from '../errors';
import { notifyNominalChanged } from '../mail/notifications';
import { personal } from './recipients.service';

/** Codes shapeWarnings makes from the nominal: recomputed when it changes (the others, e.g. within-noise, stay). */
const NOMINAL_CODES = new Set(['same-side', 'over-100-percent', 'zero-effect', 'flat-shape', 'empty-nominal', 'nominal-changed']);

const sameBins = (a: number[], b: number[]) => a.length === b.length && a.every((x, i) => x === b[i]);

/** The bins (0-based) where two nominals differ. */
const changedBins = (a: number[], b: number[]) => b.map((x, i) => (a[i] === x ? -1 : i)).filter((i) => i >= 0);

export interface NominalChange {
  regionId: number;
  processId: number;
  region: string;
  process: string;
  /** The nominal before this change (null: the template is new). */
  before: number[] | null;
  after: number[];
}

/** Entries an owner must hear about after a nominal changed: each with whether it was sent back to review. */
export type StaleNotice = { entry: { key: string; label: string; ownerId: number | null }; sentBack: boolean; region: string; process: string };

/**
 * A template's nominal changed: every shape effect on it was made against another nominal. Each
 * is marked "nominal changed since upload" (the nominal it was made against is kept, so the old
 * and new nominal per bin can be shown), its warnings and largest effect are recomputed against
 * the new nominal, and an accepted entry it belongs to goes back to review with an automatic
 * note. An effect whose nominal is changed back to the one it was made against is current again.
 * Runs inside the caller's transaction; the e-mails go after it (notifyStale).
 */
export async function markStaleEffects(tx: DbOrTx, access: Access, change: NominalChange): Promise<StaleNotice[]> {
  const rows = await shapeEffectsOn(tx, change.regionId, change.processId);
  const notices: StaleNotice[] = [];
  const sentBack = new Set<number>();
  for (const { effect, entry } of rows) {
    const reference = effect.nominalAtUpload ?? change.before;
    if (!reference || !Array.isArray(effect.up) || !Array.isArray(effect.down)) continue;
    const kept = (effect.warnings as EffectWarning[]).filter((w) => !NOMINAL_CODES.has(w.code));
    const fresh = shapeWarnings(change.after, effect.up, effect.down) as EffectWarning[];
    const largestPct = largestEffectPct('shape', effect.up, effect.down, change.after);
    if (sameBins(reference, change.after)) {
      if (effect.staleSince) await updateEffect(tx, effect.id, { staleSince: null, nominalAtUpload: reference, warnings: [...kept, ...fresh], largestPct });
      continue;
    }
    const bins = changedBins(reference, change.after);
    const stale: EffectWarning = {
      code: 'nominal-changed',
      message: `The nominal template changed in ${bins.length} bin(s) since this variation was uploaded: its yields were made against the old nominal. Keep it as a relative shift or as absolute yields when the next version is frozen, or upload it again.`,
      bins,
    };
    await updateEffect(tx, effect.id, { staleSince: effect.staleSince ?? new Date(), nominalAtUpload: reference, warnings: [...kept, ...fresh, stale], largestPct });
    const back = entry.state === 'accepted' && !sentBack.has(entry.id);
    if (back) {
      sentBack.add(entry.id);
      await updateEntryRow(tx, entry.id, { state: 'submitted', version: entry.version + 1, updatedAt: new Date() });
      await addRevision(tx, {
        analysisId: access.analysis.id,
        entryId: entry.id,
        authorId: access.userId,
        action: 'entry.submitted',
        summary: `Sent back to review automatically: the nominal template of process "${change.process}" in region "${change.region}" changed since this entry's variation was uploaded.`,
        before: { state: 'accepted' },
        after: { state: 'submitted', nominalChanged: { region: change.region, process: change.process, bins: bins.map((b) => b + 1) } },
      });
    }
    notices.push({ entry: { key: entry.key, label: entry.label, ownerId: entry.ownerId }, sentBack: back, region: change.region, process: change.process });
  }
  return notices;
}

/** E-mails each owner of an entry whose variation went stale (once per entry). */
export async function notifyStale(ctx: AppContext, access: Access, notices: StaleNotice[], baseUrl: string) {
  const byEntry = new Map<string, StaleNotice[]>();
  for (const n of notices) byEntry.set(n.entry.key, [...(byEntry.get(n.entry.key) ?? []), n]);
  for (const list of byEntry.values()) {
    const first = list[0];
    const to = (await personal(ctx, first.entry.ownerId)).filter(Boolean);
    await notifyNominalChanged(ctx, { to, baseUrl, analysis: access.analysis, entry: first.entry, by: access.userName, templates: list.map((n) => `${n.process} in ${n.region}`), sentBack: list.some((n) => n.sentBack) });
  }
}

export type StaleChoice = { effectId: number; keep: 'relative' | 'absolute' };

/**
 * Before a version is frozen: every stale effect needs a choice, and a choice must name a stale
 * effect (400 naming the field otherwise). `relative` rescales the stored variation bin by bin by
 * new/old nominal (a bin whose old nominal was 0 keeps its yield, and the revision says so);
 * `absolute` keeps the yields. Either way the effect is current again: it is now made against
 * the new nominal, with its warnings and largest effect recomputed. Returns one line per choice
 * for the version's revision. Runs in the freeze's transaction, so nothing is half-applied.
 */
export async function resolveStaleEffects(tx: DbOrTx, access: Access, choices: StaleChoice[]): Promise<string[]> {
  const stale = await staleEffectsOf(tx, access.analysis.id);
  const byId = new Map(stale.map((s) => [s.effect.id, s]));
  const unknown = choices.map((c, i) => [c, i] as const).filter(([c]) => !byId.has(c.effectId));
  if (unknown.length)
    throw badRequest(`A stale-effect choice names an effect that is not stale: ${unknown.map(([c]) => `effect ${c.effectId}`).join(', ')}. Choose only for the effects listed as stale.`, unknown.map(([c, i]) => ({ path: ['staleChoices', i, 'effectId'], message: `effect ${c.effectId} is not a stale effect of this analysis` })));
  const chosen = new Map(choices.map((c) => [c.effectId, c.keep]));
  const missing = stale.filter((s) => !chosen.has(s.effect.id));
  if (missing.length)
    throw badRequest(
      `${missing.length} effect(s) were made against a nominal that has changed since: choose for each whether to keep it as a relative shift or as absolute yields (${missing
        .slice(0, 5)
        .map((s) => `${s.entryKey} on ${s.process} in ${s.region}, effect ${s.effect.id}`)
        .join('; ')}${missing.length > 5 ? '; …' : ''}).`,
      [{ path: ['staleChoices'], message: `missing a choice for effect${missing.length === 1 ? '' : 's'} ${missing.map((s) => s.effect.id).join(', ')}` }],
    );
  const lines: string[] = [];
  for (const s of stale) {
    const keep = chosen.get(s.effect.id)!;
    const before = s.effect.nominalAtUpload ?? [];
    const after = s.nominal ?? before;
    const up = s.effect.up as number[];
    const down = s.effect.down as number[];
    const zero = before.map((b, i) => (b === 0 ? i : -1)).filter((i) => i >= 0);
    const scale = (v: number[]) => v.map((x, i) => (before[i] > 0 ? (x * after[i]) / before[i] : x));
    const [newUp, newDown] = keep === 'relative' ? [scale(up), scale(down)] : [up, down];
    const kept = (s.effect.warnings as EffectWarning[]).filter((w) => !NOMINAL_CODES.has(w.code));
    await updateEffect(tx, s.effect.id, {
      up: newUp,
      down: newDown,
      staleSince: null,
      nominalAtUpload: after,
      warnings: [...kept, ...(shapeWarnings(after, newUp, newDown) as EffectWarning[])],
      largestPct: largestEffectPct('shape', newUp, newDown, after),
    });
    lines.push(
      `${s.entryKey} on ${s.process} in ${s.region}: ${keep === 'relative' ? 'kept as a relative shift (rescaled bin by bin by new/old nominal' + (zero.length ? `; bin(s) ${zero.map((b) => b + 1).join(', ')} had an old nominal of 0 and keep their yields` : '') + ')' : 'kept as absolute yields'}`,
    );
  }
  return lines;
}

/** The analysis's stale effects, for the freeze form's choices. */
export async function listStaleEffects(ctx: AppContext, access: Access): Promise<StaleEffect[]> {
  const rows = await staleEffectsOf(ctx.db, access.analysis.id);
  return rows.map((r) => ({
    effectId: r.effect.id,
    entry: r.entryKey,
    region: r.region,
    process: r.process,
    since: r.effect.staleSince!.toISOString(),
    bins: changedBins(r.effect.nominalAtUpload ?? [], r.nominal ?? []).map((b) => b + 1),
  }));
}
