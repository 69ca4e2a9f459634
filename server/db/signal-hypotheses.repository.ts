import { and, asc, eq, sql } from 'drizzle-orm';
import type { ExchangeHypothesis, HypothesisEffect } from '@shared/schemas/exchange';
import type { DbOrTx } from './revisions.repository';
import { analyses, signalHypotheses } from './schema';

/**
 * The analysis's signal hypotheses and the parameter they differ in: read in the order of their
 * value, written whole (a hypothesis is replaced, never patched), and the look-up that tells which
 * hypotheses use a region or a process.
 */
export type HypothesisRow = typeof signalHypotheses.$inferSelect;
export type HypothesisParameter = { name: string; unit: string };

/** A stored hypothesis as the exchange file writes it (a label only when it has one). */
export const exchangeHypothesis = (h: HypothesisRow): ExchangeHypothesis => ({
  key: h.key,
  ...(h.label ? { label: h.label } : {}),
  value: h.value,
  templates: h.templates,
  effects: h.effects as HypothesisEffect[],
});

export const hypothesesOf = (db: DbOrTx, analysisId: number) =>
  db.select().from(signalHypotheses).where(eq(signalHypotheses.analysisId, analysisId)).orderBy(asc(signalHypotheses.value), asc(signalHypotheses.id));

export async function hypothesisByKey(db: DbOrTx, analysisId: number, key: string) {
  const [h] = await db.select().from(signalHypotheses).where(and(eq(signalHypotheses.analysisId, analysisId), eq(signalHypotheses.key, key)));
  return h;
}

/** Keys of the hypotheses that give a template in this region, of this process, or of this one pair. */
export async function hypothesesUsing(db: DbOrTx, analysisId: number, on: { region?: string; process?: string }) {
  const where = on.region !== undefined && on.process !== undefined ? [{ region: on.region, process: on.process }] : on.region !== undefined ? [{ region: on.region }] : [{ process: on.process }];
  const rows = await db
    .select({ key: signalHypotheses.key })
    .from(signalHypotheses)
    .where(and(eq(signalHypotheses.analysisId, analysisId), sql`${signalHypotheses.templates} @> ${JSON.stringify(where)}::jsonb`))
    .orderBy(asc(signalHypotheses.value));
  return rows.map((r) => r.key);
}

export const insertHypotheses = async (db: DbOrTx, rows: (typeof signalHypotheses.$inferInsert)[]) => {
  if (rows.length) await db.insert(signalHypotheses).values(rows);
};

/** Writes a hypothesis in place of the one with the same key, if any. */
export async function saveHypothesisRow(db: DbOrTx, existingId: number | null, values: typeof signalHypotheses.$inferInsert) {
  if (existingId === null) await db.insert(signalHypotheses).values(values);
  else await db.update(signalHypotheses).set({ label: values.label, value: values.value, templates: values.templates, effects: values.effects }).where(eq(signalHypotheses.id, existingId));
}

export async function deleteHypothesisRow(db: DbOrTx, id: number) {
  await db.delete(signalHypotheses).where(eq(signalHypotheses.id, id));
}

export async function setHypothesisParameterRow(db: DbOrTx, analysisId: number, parameter: HypothesisParameter | null) {
  await db.update(analyses).set({ hypothesisParameter: parameter }).where(eq(analyses.id, analysisId));
}
