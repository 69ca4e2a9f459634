import { asc, eq } from 'drizzle-orm';
import type { Db } from './client';
import { floatingNorms, processes, regions, templates } from './schema';

/** The binned model of one analysis, as rows (observed counts included: callers apply blinding). */
export async function loadModelRows(db: Db, analysisId: number) {
  const [regionRows, processRows, normRows, templateRows] = await Promise.all([
    db.select().from(regions).where(eq(regions.analysisId, analysisId)).orderBy(asc(regions.position), asc(regions.id)),
    db.select().from(processes).where(eq(processes.analysisId, analysisId)).orderBy(asc(processes.position), asc(processes.id)),
    db.select().from(floatingNorms).where(eq(floatingNorms.analysisId, analysisId)).orderBy(asc(floatingNorms.id)),
    db.select().from(templates).where(eq(templates.analysisId, analysisId)).orderBy(asc(templates.id)),
  ]);
  return { regions: regionRows, processes: processRows, floatingNorms: normRows, templates: templateRows };
}
export type ModelRows = Awaited<ReturnType<typeof loadModelRows>>;
