import { and, asc, eq, lt, ne, sql } from 'drizzle-orm';
import type { Db } from './client';
import { effects, entries, groups, processes, questions, regions, templates, users } from './schema';

/** Every entry of an analysis with its group and owner, by key. */
export const registerRows = (db: Db, analysisId: number) =>
  db
    .select({ entry: entries, group: groups.name, owner: { id: users.id, name: users.name, email: users.email } })
    .from(entries)
    .leftJoin(groups, eq(groups.id, entries.groupId))
    .leftJoin(users, eq(users.id, entries.ownerId))
    .where(eq(entries.analysisId, analysisId))
    .orderBy(asc(entries.key));

/** Questions not yet resolved, counted per entry. */
export const unresolvedQuestionCounts = (db: Db, analysisId: number) =>
  db
    .select({ entryId: questions.entryId, count: sql<number>`count(*)::int` })
    .from(questions)
    .where(and(eq(questions.analysisId, analysisId), ne(questions.state, 'resolved')))
    .groupBy(questions.entryId);

/** What each entry's effects add up to, aggregated in the database (tens of thousands of effects in a large model). */
export const effectSums = (db: Db, analysisId: number) =>
  db
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

/** Effects whose size was never stored, with the nominal of their template. */
export const effectsWithoutSize = (db: Db) =>
  db
    .select({ id: effects.id, kind: effects.kind, up: effects.up, down: effects.down, nominal: templates.nominal })
    .from(effects)
    .leftJoin(templates, and(eq(templates.regionId, effects.regionId), eq(templates.processId, effects.processId)))
    .where(lt(effects.largestPct, 0));

export async function setEffectSize(db: Db, id: number, largestPct: number) {
  await db.update(effects).set({ largestPct }).where(eq(effects.id, id));
}
