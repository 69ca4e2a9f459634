import type { Config } from '../config';
import type { OutboxStore } from '../db/outbox.repository';
import { siblingWorker, workerPool } from '../runs/threads/pool';
import type { MailRecord, MailTask } from './mail.worker';

export type Mail = { to: string[]; subject: string; text: string; analysisId?: number | null };

export type Mailer = {
  /**
   * Hands over one message per recipient and returns: delivery goes on without the request that
   * asked for it, so that nobody waits for a mail server. Never throws: a failure is recorded in
   * the outbox with its reason.
   */
  send: (mail: Mail) => Promise<void>;
  /** Resolves when every message handed to send() has been delivered or recorded as failed. */
  idle: () => Promise<void>;
  /** Where mail goes: "capture" (local server, messages land in the outbox) or the SMTP host. */
  describe: () => string;
  close: () => Promise<void>;
};

/**
 * Without SMTP_URL a local SMTP server on 127.0.0.1 (smtp-server) receives every message; it is
 * parsed (mailparser) and written to the outbox, which admins read on the Outbox screen. With
 * SMTP_URL mail goes to that server and the outbox keeps a copy of what was sent. Writing, sending,
 * receiving and parsing happen on the mail thread (mail.worker.ts); this thread only writes the
 * outbox records it answers with.
 */
export async function createMailer(record: OutboxStore, config: Config, log: (line: string) => void = console.log): Promise<Mailer> {
  const thread = workerPool(siblingWorker(import.meta.url, 'mail.worker'), { minThreads: 0, maxThreads: 1, concurrentTasksPerWorker: 64, idleTimeout: 60_000 });
  const pending = new Set<Promise<unknown>>();
  const track = <T>(p: Promise<T>) => {
    pending.add(p);
    p.finally(() => pending.delete(p)).catch(() => {});
    return p;
  };
  const failed = (task: MailTask, e: unknown): MailRecord => ({ to: task.to, subject: task.subject, body: task.text, analysisId: task.analysisId, delivered: false, error: e instanceof Error ? e.message : String(e) });

  const deliver = async (to: string, mail: Mail) => {
    const task: MailTask = { to, subject: mail.subject, text: mail.text, analysisId: mail.analysisId ?? null, from: config.MAIL_FROM, smtpUrl: config.SMTP_URL ?? null };
    const row = await (thread.run(task) as Promise<MailRecord>).catch((e: unknown) => failed(task, e));
    if (!row.delivered) log(`[mail] could not send "${mail.subject}" to ${to}: ${row.error}`);
    await record(row).catch((e: Error) => log(`[mail] could not record "${mail.subject}" to ${to}: ${e.message}`));
  };

  return {
    send: async (mail) => {
      const recipients = [...new Set(mail.to.map((t) => t.toLowerCase()))];
      for (const to of recipients) void track(deliver(to, mail));
    },
    idle: async () => {
      while (pending.size) await Promise.allSettled([...pending]);
    },
    describe: () => (config.SMTP_URL ? `sent through ${new URL(config.SMTP_URL).host}` : `captured locally and shown in the outbox`),
    close: async () => {
      // what was handed over is delivered (or recorded as failed) before the thread ends
      while (pending.size) await Promise.allSettled([...pending]);
      await thread.destroy();
    },
  };
}
