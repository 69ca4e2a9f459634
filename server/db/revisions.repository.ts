import { desc, eq } from 'drizzle-orm';
import type { Db } from './client';
import { revisions, users } from './schema';

export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export type DbOrTx = Db | Tx;

export async function addRevision(db: DbOrTx, r: typeof revisions.$inferInsert) {
  await db.insert(revisions).values(r);
}

export const entryRevisions = (db: DbOrTx, entryId: number) =>
  db
    .select({ revision: revisions, author: { id: users.id, name: users.name } })
    .from(revisions)
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(eq(revisions.entryId, entryId))
    .orderBy(desc(revisions.id));
