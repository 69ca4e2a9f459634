import { and, desc, eq } from 'drizzle-orm';
import type { Db } from './client';
import { fits, impactChecks } from './schema';

export type ImpactCheckRow = typeof impactChecks.$inferSelect;

export async function insertImpactCheck(db: Db, values: typeof impactChecks.$inferInsert) {
  const [row] = await db.insert(impactChecks).values(values).returning();
  return row;
}

export async function finishImpactCheck(db: Db, id: number, values: { state: 'done' | 'failed'; result?: unknown; failure?: string | null }) {
  await db.update(impactChecks).set(values).where(eq(impactChecks.id, id));
}

/** The newest check of an entry of this kind, with the label, options and regions of the fit it compares with. */
export async function latestImpactCheck(db: Db, entryId: number, kind: string) {
  const [row] = await db
    .select({ check: impactChecks, fitLabel: fits.label, fit: { options: fits.options, regionsInFit: fits.regionsInFit } })
    .from(impactChecks)
    .leftJoin(fits, eq(fits.id, impactChecks.fitId))
    .where(and(eq(impactChecks.entryId, entryId), eq(impactChecks.kind, kind)))
    .orderBy(desc(impactChecks.id))
    .limit(1);
  return row;
}

/** One check of the analysis of this kind, with the label, options and regions of the fit it compares with. */
export async function findImpactCheck(db: Db, analysisId: number, id: number, kind: string) {
  const [row] = await db
    .select({ check: impactChecks, fitLabel: fits.label, fit: { options: fits.options, regionsInFit: fits.regionsInFit } })
    .from(impactChecks)
    .leftJoin(fits, eq(fits.id, impactChecks.fitId))
    .where(and(eq(impactChecks.analysisId, analysisId), eq(impactChecks.id, id), eq(impactChecks.kind, kind)));
  return row;
}
