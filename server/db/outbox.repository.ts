import { desc, eq } from 'drizzle-orm';
import type { Db } from './client';
import { analyses, outbox } from './schema';

export type OutboxRow = typeof outbox.$inferInsert;
/** Where the mailer records every message it sent or failed to send. */
export type OutboxStore = (row: OutboxRow) => Promise<void>;

export const outboxStore =
  (db: Db): OutboxStore =>
  async (row) => {
    await db.insert(outbox).values(row);
  };

/** The newest messages first, with the name of the analysis each concerns. */
export const latestMessages = (db: Db, limit: number) =>
  db.select({ message: outbox, analysis: analyses.name }).from(outbox).leftJoin(analyses, eq(analyses.id, outbox.analysisId)).orderBy(desc(outbox.id)).limit(limit);
