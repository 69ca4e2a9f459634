import { and, asc, eq, sql } from 'drizzle-orm';
import type { PlotLabels } from '@shared/schemas/api';
import type { Db } from './client';
import { analyses, effects, entries, processes, regions } from './schema';

/** Stores an analysis's plot labels (the access copies are dropped by the analyses trigger, drizzle/0003). */
export async function updatePlotLabels(db: Db, analysisId: number, labels: PlotLabels) {
  await db.update(analyses).set({ plotLabels: labels }).where(eq(analyses.id, analysisId));
}

/** The effects that carry warnings now, with them (not as frozen: effects are not kept per version). */
export async function currentEffectWarnings(db: Db, analysisId: number) {
  return db
    .select({ entry: entries.key, region: regions.key, process: processes.key, warnings: effects.warnings })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .innerJoin(regions, eq(regions.id, effects.regionId))
    .innerJoin(processes, eq(processes.id, effects.processId))
    .where(and(eq(entries.analysisId, analysisId), sql`jsonb_array_length(${effects.warnings}) > 0`))
    .orderBy(asc(entries.key), asc(regions.key), asc(processes.key));
}
