import { and, asc, eq, inArray, ne, sql } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './revisions.repository';
import { analyses, effects, entries, processes, regions, templates } from './schema';

/** Every effect of the analysis's entries in the fit (retired ones are not), with what pruning reads. */
export const prunableEffects = (db: DbOrTx, analysisId: number) =>
  db
    .select({
      id: effects.id,
      entry: { id: entries.id, key: entries.key, label: entries.label, state: entries.state },
      region: regions.key,
      process: processes.key,
      kind: effects.kind,
      up: effects.up,
      down: effects.down,
      nominal: templates.nominal,
      largestPct: effects.largestPct,
      flatP: effects.flatP,
      /** both shifts' variances came with the upload (otherwise estimated from the template's) */
      shiftErrorsGiven: sql<boolean>`(${effects.upShiftVariance} is not null and ${effects.downShiftVariance} is not null)`,
      pruned: effects.pruned,
      prunedToScale: effects.prunedToScale,
    })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .innerJoin(regions, eq(regions.id, effects.regionId))
    .innerJoin(processes, eq(processes.id, effects.processId))
    .leftJoin(templates, and(eq(templates.regionId, effects.regionId), eq(templates.processId, effects.processId)))
    .where(and(eq(entries.analysisId, analysisId), ne(entries.state, 'retired')))
    .orderBy(asc(entries.key), asc(regions.key), asc(processes.key), asc(effects.kind));

/** Effects whose flat-shape p-value was not computed since they were written, with what it needs. */
export const effectsWithoutFlatP = (db: Db, analysisId: number) =>
  db
    .select({
      id: effects.id,
      kind: effects.kind,
      up: effects.up,
      down: effects.down,
      upShiftVariance: effects.upShiftVariance,
      downShiftVariance: effects.downShiftVariance,
      nominal: templates.nominal,
      variance: templates.variance,
    })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .leftJoin(templates, and(eq(templates.regionId, effects.regionId), eq(templates.processId, effects.processId)))
    .where(and(eq(entries.analysisId, analysisId), eq(effects.flatP, -1)));

export async function setFlatP(db: Db, values: { id: number; flatP: number | null }[]) {
  if (!values.length) return;
  await db.transaction(async (tx) => {
    for (const v of values) await tx.update(effects).set({ flatP: v.flatP }).where(eq(effects.id, v.id));
  });
}

/** Marks effects pruned (or in the fit again); each with whether it keeps its normalisation. */
export async function setPruned(db: DbOrTx, ids: number[], values: { pruned: boolean; prunedToScale: boolean }) {
  if (ids.length) await db.update(effects).set(values).where(inArray(effects.id, ids));
}

export async function setPruningRules(db: DbOrTx, analysisId: number, rules: { pruneBelowPct: number; pruneShapeP: number }) {
  await db.update(analyses).set(rules).where(eq(analyses.id, analysisId));
}
