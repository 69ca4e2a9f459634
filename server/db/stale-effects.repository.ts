import { and, eq, isNotNull } from 'drizzle-orm';
import type { DbOrTx } from './revisions.repository';
import { effects, entries, processes, regions, templates } from './schema';

/** The shape effects on one template, with their entry's key, label, state, version and owner. */
export const shapeEffectsOn = (db: DbOrTx, regionId: number, processId: number) =>
  db
    .select({ effect: effects, entry: { id: entries.id, key: entries.key, label: entries.label, state: entries.state, version: entries.version, ownerId: entries.ownerId } })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .where(and(eq(effects.regionId, regionId), eq(effects.processId, processId), eq(effects.kind, 'shape')));

/** Every stale effect of an analysis, with its entry, region and process keys and the template's nominal now. */
export const staleEffectsOf = (db: DbOrTx, analysisId: number) =>
  db
    .select({ effect: effects, entryKey: entries.key, region: regions.key, process: processes.key, nominal: templates.nominal })
    .from(effects)
    .innerJoin(entries, eq(entries.id, effects.entryId))
    .innerJoin(regions, eq(regions.id, effects.regionId))
    .innerJoin(processes, eq(processes.id, effects.processId))
    .leftJoin(templates, and(eq(templates.regionId, effects.regionId), eq(templates.processId, effects.processId)))
    .where(and(eq(entries.analysisId, analysisId), isNotNull(effects.staleSince)));

export async function updateEffect(db: DbOrTx, id: number, values: Partial<typeof effects.$inferInsert>) {
  await db.update(effects).set(values).where(eq(effects.id, id));
}
