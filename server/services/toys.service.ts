import { randomInt } from 'node:crypto';
import { startToysSchema, toyHypothesisSchema, toySummarySchema, type ToyRun } from '@shared/schemas/toys';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findToyRow, insertToyRun, listToyRows, type ToyRow } from '../db/toys.repository';
import { conflict, notFound } from '../errors';
import { withheldResultMessage } from './blinding.service';
import { findFit, withheldReadBy } from './fits.service';
import { cancelJob, toyRunsTable } from '../runs/run-rows';
import { untilStopped } from '../runs/local-runner';

/** A toy run as sent; `withheld` (the fit read blinded data) keeps its summary back. */
function toyRunOf(row: Omit<ToyRow, 'summary'> & { summary?: unknown }, createdBy: string | null, withheld = false): ToyRun {
  return {
    id: row.id,
    fitId: row.fitId,
    label: row.label,
    count: row.count,
    hypothesis: toyHypothesisSchema.parse(row.hypothesis),
    seed: row.seed,
    state: row.state,
    progress: row.progress,
    stage: row.stage,
    failure: row.failure,
    createdAt: row.createdAt.toISOString(),
    createdBy,
    startedAt: row.startedAt?.toISOString() ?? null,
    finishedAt: row.finishedAt?.toISOString() ?? null,
    workers: Object.keys(row.workers ?? {}).length,
    // never a number from a run that did not succeed
    summary: row.state === 'succeeded' && row.summary && !withheld ? toySummarySchema.parse(row.summary) : null,
  };
}

/** The toy runs of one fit, newest first, without their summaries. */
export async function listToyRuns(ctx: AppContext, access: Access, fitId: number): Promise<ToyRun[]> {
  const fit = await findFit(ctx, access, fitId);
  const withheld = withheldReadBy(access.analysis, fit.fit).length > 0;
  const rows = await listToyRows(ctx.db, access.analysis.id, fitId);
  return rows.map((r) => toyRunOf(r.run, r.by, withheld));
}

async function findToyRun(ctx: AppContext, access: Access, id: number) {
  const row = await findToyRow(ctx.db, access.analysis.id, id);
  if (!row) throw notFound(`Toy run ${id}`);
  return row;
}

export async function getToyRun(ctx: AppContext, access: Access, id: number): Promise<ToyRun> {
  const row = await findToyRun(ctx, access, id);
  const fit = await findFit(ctx, access, row.run.fitId);
  return toyRunOf(row.run, row.by, withheldReadBy(access.analysis, fit.fit).length > 0);
}

/** Toys are drawn from a converged fit only: its best fit (or the best fit at a chosen μ) is where they come from. */
export async function startToys(ctx: AppContext, access: Access, fitId: number, body: unknown): Promise<ToyRun> {
  const input = startToysSchema.parse(body);
  const fit = await findFit(ctx, access, fitId);
  if (fit.fit.state !== 'succeeded') throw conflict(`Fit ${fitId} has not converged (${fit.fit.state}); toys are drawn from a converged fit only.`);
  const withheld = withheldReadBy(access.analysis, fit.fit);
  if (withheld.length) throw conflict(withheldResultMessage(withheld));
  if ((fit.fit.options as { hiddenMu?: boolean }).hiddenMu) throw conflict(`Fit ${fitId} hides μ: pseudo-experiments drawn at its best fit would show it.`);
  if (input.hypothesis.kind === 'fixed-mu' && fit.fit.headline === null) throw conflict(`Fit ${fitId} has no headline μ̂; toys at a chosen μ need a fit of μ.`);
  const row = await insertToyRun(ctx.db, {
    analysisId: access.analysis.id,
    fitId,
    label: input.label,
    count: input.count,
    hypothesis: input.hypothesis,
    seed: input.seed ?? randomInt(0, 2 ** 31 - 1),
    createdById: access.userId,
  });
  await ctx.toys.enqueue(row.id);
  return toyRunOf(row, access.userName);
}

export async function cancelToys(ctx: AppContext, access: Access, id: number): Promise<ToyRun> {
  const row = await findToyRun(ctx, access, id);
  if (row.run.state !== 'queued' && row.run.state !== 'running') throw conflict(`Toy run ${id} has ended (${row.run.state}); there is nothing to cancel.`);
  await cancelJob(ctx.db, toyRunsTable, ctx.toys, { id, state: row.run.state, what: `Toy run ${id}` }, access.userName);
  const after = await untilStopped(() => findToyRun(ctx, access, id), (r) => r.run.state === 'running');
  return toyRunOf(after.run, after.by);
}
