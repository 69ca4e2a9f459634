import { desc, eq } from 'drizzle-orm';
import type { Db } from './client';
import { analyses, outbox } from './schema';

export type OutboxRow = typeof outbox.$inferInsert;
/** Where the mailer records every message it sent or failed to send. */
export type OutboxStore = (row: OutboxRow) => Promise<void>;

/**
 * Messages recorded in the same turn of the event loop (a notice to a team lands as many at once)
 * are written in one statement; if that fails, each is written alone, so that one bad row costs
 * only its own record.
 */
export const outboxStore = (db: Db): OutboxStore => {
  type Pending = { row: OutboxRow; written: () => void; failed: (e: unknown) => void };
  let batch: Pending[] | null = null;
  const write = async (rows: Pending[]) => {
    try {
      await db.insert(outbox).values(rows.map((r) => r.row));
      for (const r of rows) r.written();
    } catch (e) {
      if (rows.length === 1) return rows[0].failed(e);
      for (const r of rows) await db.insert(outbox).values(r.row).then(r.written, r.failed);
    }
  };
  return (row) =>
    new Promise<void>((written, failed) => {
      let rows = batch;
      if (!rows) {
        const taken: Pending[] = (rows = batch = []);
        setImmediate(() => {
          batch = null;
          void write(taken);
        });
      }
      rows.push({ row, written, failed });
    });
};

/** The newest messages first, with the name of the analysis each concerns. */
export const latestMessages = (db: Db, limit: number) =>
  db.select({ message: outbox, analysis: analyses.name }).from(outbox).leftJoin(analyses, eq(analyses.id, outbox.analysisId)).orderBy(desc(outbox.id)).limit(limit);
