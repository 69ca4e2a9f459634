import { and, eq } from 'drizzle-orm';
import { notFound } from '../errors';
import type { DbOrTx } from './revisions.repository';
import { entries } from './schema';

export type EntryRow = typeof entries.$inferSelect;

/** The register entry `key` of an analysis, or a 404 naming it. */
export async function findEntry(db: DbOrTx, analysisId: number, key: string): Promise<EntryRow> {
  const [entry] = await db.select().from(entries).where(and(eq(entries.analysisId, analysisId), eq(entries.key, key)));
  if (!entry) throw notFound(`Register entry "${key}"`);
  return entry;
}
