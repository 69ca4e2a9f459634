import { count } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { openDatabase } from '../../../server/db/client';
import { analyses, entries, users } from '../../../server/db/schema';
import { seedDemo } from '../../../server/seed/demo';

describe('writing the demo on first start', () => {
  it('leaves nothing when it stops part-way, so the next start writes the whole demo', async () => {
    const { db, client, close } = await openDatabase();
    try {
      // the second analysis cannot be written: the first start stops there
      await client.exec(`
        create function refuse_cascade() returns trigger language plpgsql as $$ begin raise exception 'stopped'; end $$;
        create trigger refuse_cascade before insert on analyses for each row when (new.slug = 'cascade-rate') execute function refuse_cascade();`);
      await expect(seedDemo(db)).rejects.toThrow();
      const counts = async () => ({
        users: (await db.select({ n: count() }).from(users))[0].n,
        analyses: (await db.select({ n: count() }).from(analyses))[0].n,
        entries: (await db.select({ n: count() }).from(entries))[0].n,
      });
      expect(await counts()).toEqual({ users: 0, analyses: 0, entries: 0 });

      await client.exec('drop trigger refuse_cascade on analyses; drop function refuse_cascade();');
      expect((await seedDemo(db)).seeded).toBe(true);
      expect((await db.select({ slug: analyses.slug }).from(analyses)).map((a) => a.slug).sort()).toEqual(['cascade-modes', 'cascade-rate', 'vireon-pilot', 'vireon-search']);
      expect((await counts()).entries).toBeGreaterThan(40);
    } finally {
      await close();
    }
  });
});
