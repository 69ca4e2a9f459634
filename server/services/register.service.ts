import { and, asc, eq, lt, sql } from 'drizzle-orm';
import { largestEffectPct } from '@shared/validation/variation-warnings';
import type { Db } from '../db/client';
import type { EntrySummary } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { effects, entries, groups, processes, regions, templates, users } from '../db/schema';

/**
 * The register of a large analysis is an aggregate over tens of thousands of effects: it is kept
 * in memory per analysis and rebuilt when its fingerprint changes. Every write to an entry or its
 * effects bumps the entry's version, and group renames and removals change the group list, so
 * the fingerprint (entry count, version sum, last update, groups) changes with any of them.
 */
const registerCopies = new WeakMap<object, Map<number, { fingerprint: string; entries: EntrySummary[] }>>();

export async function listEntries(ctx: AppContext, access: Access): Promise<EntrySummary[]> {
  const analysisId = access.analysis.id;
  const { rows: fp } = await ctx.client.query<{ fingerprint: string }>(
    `select concat_ws('|', count(*), sum(version), max(updated_at), (select string_agg(id || ':' || name, ',' order by id) from groups where analysis_id = $1)) as fingerprint
       from entries where analysis_id = $1`,
    [analysisId],
  );
  let copies = registerCopies.get(ctx.db);
  if (!copies) registerCopies.set(ctx.db, (copies = new Map()));
  const copy = copies.get(analysisId);
  if (copy && copy.fingerprint === fp[0].fingerprint) return copy.entries;
  const entries = await readEntries(ctx, analysisId);
  copies.set(analysisId, { fingerprint: fp[0].fingerprint, entries });
  return entries;
}

async function readEntries(ctx: AppContext, analysisId: number): Promise<EntrySummary[]> {
  const rows = await ctx.db
    .select({ entry: entries, group: groups.name, owner: { id: users.id, name: users.name, email: users.email } })
    .from(entries)
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .leftJoin(users, eq(users.id, entries.ownerId))
    .where(eq(entries.analysisId, analysisId))
    .orderBy(asc(entries.key));
  // one row per entry, aggregated in the database: a large model has tens of thousands of effects
  const sums = await ctx.db
    .select({
      entryId: effects.entryId,
      regions: sql<string[]>`array_agg(distinct ${regions.key} order by ${regions.key})`,
      processes: sql<string[]>`array_agg(distinct ${processes.key} order by ${processes.key})`,
      kinds: sql<('scale' | 'shape')[]>`array_agg(distinct ${effects.kind}::text order by ${effects.kind}::text)`,
      largestPct: sql<number>`max(${effects.largestPct})`,
      warnings: sql<number>`sum(jsonb_array_length(${effects.warnings}))::int`,
    })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .innerJoin(regions, eq(regions.id, effects.regionId))
    .innerJoin(processes, eq(processes.id, effects.processId))
    .where(eq(entries.analysisId, analysisId))
    .groupBy(effects.entryId);
  const byEntry = new Map(sums.map((x) => [x.entryId, x]));
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
      updatedAt: entry.updatedAt.toISOString(),
    };
  });
}

/** Effects written before their size was stored get it computed once, at start. */
export async function backfillEffectSizes(db: Db) {
  const missing = await db
    .select({ id: effects.id, kind: effects.kind, up: effects.up, down: effects.down, nominal: templates.nominal })
    .from(effects)
    .leftJoin(templates, and(eq(templates.regionId, effects.regionId), eq(templates.processId, effects.processId)))
    .where(lt(effects.largestPct, 0));
  for (const e of missing) await db.update(effects).set({ largestPct: largestEffectPct(e.kind, e.up, e.down, e.nominal ?? undefined) }).where(eq(effects.id, e.id));
  return missing.length;
}
