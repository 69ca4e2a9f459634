import { count } from 'drizzle-orm';
import { hashPassword } from '../auth/passwords';
import type { Db } from '../db/client';
import type { Tx } from '../db/revisions.repository';
import { analyses, memberships, users } from '../db/schema';
import { importModel } from '../services/exchange-import.service';
import { demoScenario, type DemoAccount } from './scenario';

export type SeedOutcome = { seeded: boolean; accounts: DemoAccount[]; password: string };

/**
 * Writes the invented demo (accounts, two analyses with their models and registers) into an empty
 * database, in one transaction: a first start stopped part-way leaves no accounts, so the next
 * start writes the demo whole instead of finding accounts and skipping it.
 */
export async function seedDemo(db: Db): Promise<SeedOutcome> {
  const scenario = demoScenario();
  const [{ n }] = await db.select({ n: count() }).from(users);
  if (n > 0) return { seeded: false, accounts: scenario.accounts, password: scenario.password };
  const passwordHash = await hashPassword(scenario.password);
  await db.transaction((tx) => writeDemo(tx, scenario, passwordHash));
  return { seeded: true, accounts: scenario.accounts, password: scenario.password };
}

async function writeDemo(db: Tx, scenario: ReturnType<typeof demoScenario>, passwordHash: string) {
  const userRows = await db
    .insert(users)
    .values(scenario.accounts.map((a) => ({ email: a.email, name: a.name, isAdmin: a.isAdmin, passwordHash })))
    .returning();
  const idOf = new Map(userRows.map((u) => [u.email, u.id]));
  const admin = userRows.find((u) => u.isAdmin)!;

  for (const demo of scenario.analyses) {
    const [analysis] = await db
      .insert(analyses)
      .values({ slug: demo.slug, name: demo.name, description: demo.description, blinding: demo.blinded ? 'blinded' : 'unblinded', plotLabels: demo.plotLabels })
      .returning();
    await db.insert(memberships).values(demo.members.map((m) => ({ analysisId: analysis.id, userId: idOf.get(m.email)!, role: m.role })));
    const entryMeta = Object.fromEntries(Object.entries(demo.entries).map(([key, m]) => [key, { ...m, ownerId: idOf.get(m.owner) ?? null }]));
    await importModel(db, analysis.id, demo.model, { authorId: admin.id, entryMeta });
  }
}
