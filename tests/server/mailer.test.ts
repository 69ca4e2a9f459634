import { once } from 'node:events';
import net, { type AddressInfo } from 'node:net';
import { describe, expect, it } from 'vitest';
import { testConfig } from '../../server/config';
import { openDatabase } from '../../server/db/client';
import { outbox } from '../../server/db/schema';
import { createMailer } from '../../server/mail/mailer';
import { outboxStore } from '../../server/db/outbox.repository';

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
});
