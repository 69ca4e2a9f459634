import type { ExchangeModel } from '@shared/schemas/exchange';
import type { ImpactCheck } from '@shared/schemas/register';
import type { FitOptions } from '@shared/schemas/fit';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { listFitRows, storedHead, versionModel, type StoredHead } from '../db/fits.repository';
import { finishImpactCheck, insertImpactCheck, latestImpactCheck, type ImpactCheckRow } from '../db/impact-checks.repository';
import type { WhatIfOutcome } from '../fit';
import { buildExchange } from './exchange-export.service';
import { withheldReadBy } from './fits.service';

/**
 * What a change does to the analysis's latest fit, before anyone commits to it (fit/what-if.ts):
 * when a contact saves a variation, the latest converged fit's configuration is refitted with the
 * entry's new effects, warm-started from that fit. Stored fits are not touched: the outcome is a
 * check of its own, shown on the entry to its owner and to the convener who reviews it. A fit that
 * read blinded data is never the reference; one that hides μ gives pulls and constraints only.
 */

/** A parameter whose pull or constraint moved by more than this is listed (common practice, no source). */
export const MOVED = 0.1;

/**
 * The newest converged fit of the analysis's own configuration whose numbers may be shown, with
 * its stored result: not a diagnosis check, and not a variant that holds parameters, drops the
 * systematics or the template statistics, or splits a parameter (fit/variants.ts).
 */
export async function referenceFit(ctx: AppContext, access: Access) {
  for (const row of await listFitRows(ctx.db, access.analysis.id)) {
    if (row.fit.state !== 'succeeded' || row.fit.checkOfFitId !== null || withheldReadBy(access.analysis, row.fit).length) continue;
    const options = row.fit.options as Partial<FitOptions>;
    if (options.hold?.length || options.holdGroups?.length || options.statOnly || options.templateStats === false || options.decorrelate?.length) continue;
    const head = await storedHead(ctx.db, row.fit.id);
    if (head?.status === 'converged') return { fit: row.fit, version: row.version, head };
  }
  return null;
}

/** Keeps what the reference's blinding allows: without a free μ or with μ hidden, no μ̂ and no impacts on it. */
export function shown(outcome: WhatIfOutcome, head: StoredHead): WhatIfOutcome {
  if (!head.options.hiddenMu) return outcome;
  return { ...outcome, mu: { before: null, after: null, fixed: outcome.mu.fixed }, muError: { before: null, after: null }, focus: outcome.focus.map((f) => ({ ...f, impact: null, rankBefore: null, rankAfter: null })) };
}

/** The reference fit's model with one entry's systematic as the register holds it now (or without it, when it has no effects). */
async function withEntryAsNow(ctx: AppContext, access: Access, versionId: number, key: string): Promise<ExchangeModel> {
  const version = (await versionModel(ctx.db, versionId)) as ExchangeModel;
  const now = (await buildExchange(ctx.db, access.analysis, { withhold: false })).systematics.find((s) => s.key === key);
  const others = version.systematics.filter((s) => s.key !== key);
  return { ...version, systematics: now && now.effects.length ? [...others, now] : others };
}

/**
 * Starts the check of an upload to an entry and returns at once: the outcome lands in the
 * check's row when the refit is done (a second or two; seconds for a large model).
 */
export async function checkUpload(ctx: AppContext, access: Access, entry: { id: number; key: string }): Promise<void> {
  const reference = await referenceFit(ctx, access);
  if (!reference) return;
  const row = await insertImpactCheck(ctx.db, { analysisId: access.analysis.id, entryId: entry.id, kind: 'upload', fitId: reference.fit.id, createdById: access.userId });
  inBackground(ctx, row.id, async () => {
    const model = await withEntryAsNow(ctx, access, reference.fit.modelVersionId, entry.key);
    const focus = model.systematics.some((s) => s.key === entry.key) ? [entry.key] : [];
    return shown(await ctx.fits.whatIf({ model, options: reference.head.options, reference: reference.head, focus }), reference.head);
  });
}

/** Runs a check's refit after the request has been answered; its outcome (or failure) lands in its row. */
export function inBackground(ctx: AppContext, id: number, compute: () => Promise<WhatIfOutcome & Record<string, unknown>>) {
  const run = async () => {
    try {
      const outcome = await compute();
      await finishImpactCheck(ctx.db, id, outcome.failure ? { state: 'failed', failure: outcome.failure, result: outcome } : { state: 'done', result: outcome });
    } catch (e) {
      await finishImpactCheck(ctx.db, id, { state: 'failed', failure: e instanceof Error ? e.message : String(e) }).catch(() => {});
    }
  };
  const task = run();
  pending.add(task);
  void task.finally(() => pending.delete(task));
}

const pending = new Set<Promise<void>>();
/** Resolves when every check started in this process has landed (tests, and a server that stops). */
export const impactChecksIdle = async () => {
  while (pending.size) await Promise.all([...pending]);
};

/** The newest upload check of an entry as stored (the entry's page keeps it with the page). */
export const latestUploadCheck = (ctx: AppContext, entryId: number) => latestImpactCheck(ctx.db, entryId, 'upload');

/** The newest upload check of an entry, as its page shows it to this caller. */
export function uploadCheckView(access: Access, found: Awaited<ReturnType<typeof latestUploadCheck>>): ImpactCheck | null {
  if (!found) return null;
  const { focus, ...view } = checkView(access, found);
  return { ...view, focus: focus ?? [] };
}

/**
 * A stored check as shown: a region blinded since the check was made withholds everything that
 * was compared with its data.
 */
export function checkView(access: Access, found: { check: ImpactCheckRow; fitLabel: string | null; fit: { options: unknown; regionsInFit: string[] } | null }) {
  const { check, fitLabel, fit } = found;
  const withheld = fit ? withheldReadBy(access.analysis, fit) : [];
  const r = withheld.length || check.state === 'running' ? null : (check.result as Partial<WhatIfOutcome> | null);
  return {
    state: withheld.length ? ('withheld' as const) : (check.state as ImpactCheck['state']),
    fit: check.fitId ? { id: check.fitId, label: fitLabel || `Fit ${check.fitId}` } : null,
    createdAt: check.createdAt.toISOString(),
    failure: check.failure,
    mu: r?.mu ?? null,
    muError: r?.muError ?? null,
    focus: r?.focus,
    moved: (r?.parameters ?? []).filter((p) => moved(p.pull) || moved(p.constraint)),
    // checks stored before warnings were kept have none
    warnings: r?.warnings ?? [],
    seconds: r?.seconds ?? null,
  };
}

const moved = (x: { before: number | null; after: number | null }) => (x.before === null) !== (x.after === null) || (x.before !== null && x.after !== null && Math.abs(x.after - x.before) > MOVED);
