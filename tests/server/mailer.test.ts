import { once } from 'node:events';
import net, { type AddressInfo } from 'node:net';
import { describe, expect, it } from 'vitest';
import { testConfig } from '../../server/config';
import { openDatabase } from '../../server/db/client';
import { outbox } from '../../server/db/schema';
import { createMailer } from '../../server/mail/mailer';
import { outboxStore } from '../../server/db/outbox.repository';
import { analyses } from '../../server/db/schema';

describe('the mailer', () => {
  it('hands a message over without waiting for the mail server, and records what became of it in the outbox', async () => {
    // a mail server that accepts connections and never answers, until it hangs up
    const sockets: net.Socket[] = [];
    const silent = net.createServer((s) => void sockets.push(s)).listen(0, '127.0.0.1');
    await once(silent, 'listening');
    const database = await openDatabase();
    const mailer = await createMailer(outboxStore(database.db), testConfig({ SMTP_URL: `smtp://127.0.0.1:${(silent.address() as AddressInfo).port}` }), () => {});
    try {
      const started = Date.now();
      await mailer.send({ to: ['nell@lantern.example'], subject: 'Handed over', text: 'The request that sent this did not wait.' });
      expect(Date.now() - started).toBeLessThan(1000);
      expect(await database.db.select().from(outbox)).toEqual([]);

      while (!sockets.length) await new Promise((r) => setTimeout(r, 10));
      for (const s of sockets) s.destroy();
      await mailer.idle();
      expect(await database.db.select().from(outbox)).toMatchObject([{ to: 'nell@lantern.example', subject: 'Handed over', delivered: false }]);
    } finally {
      silent.close();
      await mailer.close();
      await database.close();
    }
  });

  it('records a notice to a whole team in the outbox, one message per person, each with its own recipient', async () => {
    const database = await openDatabase();
    const mailer = await createMailer(outboxStore(database.db), testConfig(), () => {});
    try {
      const [analysis] = await database.db.insert(analyses).values({ slug: 'a', name: 'A' }).returning();
      const team = Array.from({ length: 40 }, (_, i) => `person-${i}@lantern.example`);
      await mailer.send({ to: team, subject: 'A question was raised', text: 'Where does its constraint come from?', analysisId: analysis.id });
      await mailer.send({ to: ['Person-3@lantern.example', 'nell@lantern.example'], subject: 'Answered', text: 'The control region.' });
      await mailer.idle();
      const rows = await database.db.select().from(outbox);
      expect(rows).toHaveLength(42);
      expect(rows.filter((r) => r.subject === 'A question was raised').map((r) => r.to).sort()).toEqual([...team].sort());
      expect(rows.filter((r) => r.subject === 'Answered').map((r) => r.to).sort()).toEqual(['nell@lantern.example', 'person-3@lantern.example']);
      for (const r of rows) expect(r).toMatchObject({ delivered: true, error: null, analysisId: r.subject === 'Answered' ? null : analysis.id });
      expect(rows.every((r) => r.body.includes(r.subject === 'Answered' ? 'The control region.' : 'Where does its constraint come from?'))).toBe(true);
    } finally {
      await mailer.close();
      await database.close();
    }
  });

  it('writes the messages recorded together one by one when writing them at once fails, so that one bad record loses only itself', async () => {
    const database = await openDatabase();
    try {
      const record = outboxStore(database.db);
      const row = (to: string, analysisId: number | null) => ({ to, subject: 'S', body: 'B', analysisId, delivered: true });
      // analysis 999 does not exist: its row breaks the foreign key
      const results = await Promise.allSettled([record(row('a@x.example', null)), record(row('b@x.example', 999)), record(row('c@x.example', null))]);
      expect(results.map((r) => r.status)).toEqual(['fulfilled', 'rejected', 'fulfilled']);
      expect((await database.db.select().from(outbox)).map((r) => r.to).sort()).toEqual(['a@x.example', 'c@x.example']);
    } finally {
      await database.close();
    }
  });
});
