import { largestEffectPct } from '@shared/validation/variation-warnings';
import type { Db } from '../db/client';
import type { EntrySummary } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { untilModelChanges, untilRegisterChanges } from '../cache/change-notices';
import { encodeJson, type Encoded } from '../cache/encoded-json';
import { pruningCounts } from './pruning.service';
import { effectSums, effectsWithoutSize, registerRows, setEffectSize, unresolvedQuestionCounts } from '../db/register.repository';

/**
 * The register of a large analysis is an aggregate over tens of thousands of effects, read far
 * more often than written: it is kept in memory per analysis, already encoded, until a change is
 * announced. Database triggers announce every change to entries, effects, groups, questions and
 * owners' names on the channel "register_changed" at commit (drizzle/0002), so no writer can forget to,
 * and the embedded database delivers the announcement before the writing query returns. The
 * aggregate over the effects is kept apart, until the model changes (`effectSummaries`).
 */

/** The register as response bytes, built once per change; readers arriving while it is built share it. */
export function listEntriesEncoded(ctx: AppContext, access: Access): Promise<Encoded> {
  const analysisId = access.analysis.id;
  const rules = `${access.analysis.pruneBelowPct}/${access.analysis.pruneShapeP}`;
  return untilRegisterChanges(ctx.client, analysisId, `register response, pruning ${rules}`, async () => encodeJson(await readEntries(ctx, access), 'until-changed'));
}

async function readEntries(ctx: AppContext, access: Access): Promise<EntrySummary[]> {
  const analysisId = access.analysis.id;
  const rows = await registerRows(ctx.db, analysisId);
  const byEntry = await effectSummaries(ctx, analysisId);
  const pruning = await pruningCounts(ctx, access);
  const unresolved = await unresolvedQuestionCounts(ctx.db, analysisId);
  const openByEntry = new Map(unresolved.map((x) => [x.entryId, x.count]));
  return rows.map(({ entry, group, owner }) => {
    const own = byEntry.get(entry.id);
    return {
      key: entry.key,
      label: entry.label,
      group,
      owner: owner?.id ? owner : null,
      state: entry.state,
      processes: own?.processes ?? [],
      regions: own?.regions ?? [],
      kinds: own?.kinds ?? [],
      largestEffectPct: own ? own.largestPct : null,
      warnings: own?.warnings ?? 0,
      openQuestions: openByEntry.get(entry.id) ?? 0,
      pruning: pruning.get(entry.key) ?? { candidates: 0, pruned: 0 },
      updatedAt: entry.updatedAt.toISOString(),
    };
  });
}

/**
 * What each entry's effects add up to, aggregated in the database (a large model has tens of
 * thousands of effects). The costly part of the register, and it changes only with the model:
 * kept until "model_changed" is announced, so that editing an entry or answering a question
 * rebuilds the register without it.
 */
function effectSummaries(ctx: AppContext, analysisId: number) {
  return untilModelChanges(ctx.client, analysisId, 'effect summaries', async () => {
    const sums = await effectSums(ctx.db, analysisId);
    return new Map(sums.map((x) => [x.entryId, x]));
  });
}

/** Effects written before their size was stored get it computed once, at start. */
export async function backfillEffectSizes(db: Db) {
  const missing = await effectsWithoutSize(db);
  for (const e of missing) await setEffectSize(db, e.id, largestEffectPct(e.kind, e.up, e.down, e.nominal ?? undefined));
  return missing.length;
}
