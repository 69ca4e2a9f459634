import { once } from 'node:events';
import type { AddressInfo } from 'node:net';
import nodemailer, { type Transporter } from 'nodemailer';
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import type { Config } from '../config';
import type { OutboxStore } from '../db/outbox.repository';

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

const ANALYSIS_HEADER = 'x-plumbline-analysis';

/**
 * Without SMTP_URL the server starts a local SMTP server on 127.0.0.1 (smtp-server); every message
 * it receives is parsed (mailparser) and written to the outbox, which admins read on the Outbox
 * screen. With SMTP_URL mail goes to that server and the outbox keeps a copy of what was sent.
 */
export async function createMailer(record: OutboxStore, config: Config, log: (line: string) => void = console.log): Promise<Mailer> {
  let capture: SMTPServer | null = null;
  let transport: Transporter;
  const pending = new Set<Promise<unknown>>();
  const track = <T>(p: Promise<T>) => {
    pending.add(p);
    p.finally(() => pending.delete(p)).catch(() => {});
    return p;
  };

  if (config.SMTP_URL) {
    transport = nodemailer.createTransport(config.SMTP_URL);
  } else {
    capture = new SMTPServer({
      authOptional: true,
      // the package's bundled certificate has expired: plain SMTP on loopback only
      disabledCommands: ['STARTTLS', 'AUTH'],
      logger: false,
      size: 5 * 1024 * 1024,
      onData(stream, session, callback) {
        track(
          simpleParser(stream)
            .then(async (parsed) => {
              const analysis = parsed.headers.get(ANALYSIS_HEADER);
              await record({
                to: session.envelope.rcptTo.map((r) => r.address).join(', '),
                subject: parsed.subject ?? '',
                body: parsed.text ?? '',
                messageId: parsed.messageId ?? null,
                analysisId: analysis ? Number(analysis) : null,
                delivered: true,
              });
              callback();
            })
            .catch((e: Error) => callback(e)),
        );
      },
    });
    capture.listen(0, '127.0.0.1');
    await once(capture.server, 'listening');
    const { port } = capture.server.address() as AddressInfo;
    // a few connections kept open and reused: a notice to a whole team is many messages at once,
    // and a connection per message would cost each its own handshake on this thread
    transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true, pool: true, maxConnections: 2, maxMessages: Infinity });
  }

  const deliver = async (to: string, mail: Mail) => {
    try {
      const info = await transport.sendMail({
        from: config.MAIL_FROM,
        to,
        subject: mail.subject,
        text: mail.text,
        headers: mail.analysisId ? { [ANALYSIS_HEADER]: String(mail.analysisId) } : {},
      });
      if (!capture) await record({ to, subject: mail.subject, body: mail.text, messageId: info.messageId, analysisId: mail.analysisId ?? null, delivered: true });
    } catch (e) {
      const reason = e instanceof Error ? e.message : String(e);
      log(`[mail] could not send "${mail.subject}" to ${to}: ${reason}`);
      await record({ to, subject: mail.subject, body: mail.text, analysisId: mail.analysisId ?? null, delivered: false, error: reason });
    }
  };

  return {
    send: async (mail) => {
      const recipients = [...new Set(mail.to.map((t) => t.toLowerCase()))];
      for (const to of recipients) void track(deliver(to, mail));
    },
    idle: async () => {
      while (pending.size) await Promise.allSettled([...pending]);
    },
    describe: () => (capture ? `captured locally and shown in the outbox` : `sent through ${new URL(config.SMTP_URL!).host}`),
    close: async () => {
      // what was handed over is delivered (or recorded as failed) before the transport closes
      while (pending.size) await Promise.allSettled([...pending]);
      transport.close();
      if (capture) await new Promise<void>((resolve) => capture!.close(() => resolve()));
    },
  };
}
