import { once } from 'node:events';
import type { AddressInfo } from 'node:net';
import nodemailer, { type Transporter } from 'nodemailer';
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';

/**
 * The mail thread: it writes each message (MIME), speaks SMTP, and without SMTP_URL also runs the
 * local capture server and parses what it receives, so that none of this runs on the request
 * thread. It never touches the database: each task answers with the outbox record of its message,
 * which the mailer writes.
 */
export type MailTask = { to: string; subject: string; text: string; analysisId: number | null; from: string; smtpUrl: string | null };
export type MailRecord = { to: string; subject: string; body: string; messageId?: string | null; analysisId: number | null; delivered: boolean; error?: string };

export const ANALYSIS_HEADER = 'x-plumbline-analysis';

let ready: Promise<{ transport: Transporter; captured: Map<string, MailRecord> | null }> | null = null;

async function start(smtpUrl: string | null) {
  if (smtpUrl) return { transport: nodemailer.createTransport(smtpUrl), captured: null };
  // what the capture server parsed, by message id, until the sender's task takes it
  const captured = new Map<string, MailRecord>();
  const capture = new SMTPServer({
    authOptional: true,
    // the package's bundled certificate has expired: plain SMTP on loopback only
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 5 * 1024 * 1024,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          const analysis = parsed.headers.get(ANALYSIS_HEADER);
          captured.set(parsed.messageId ?? '', {
            to: session.envelope.rcptTo.map((r) => r.address).join(', '),
            subject: parsed.subject ?? '',
            body: parsed.text ?? '',
            messageId: parsed.messageId ?? null,
            analysisId: analysis ? Number(analysis) : null,
            delivered: true,
          });
          callback();
        })
        .catch((e: Error) => callback(e));
    },
  });
  capture.listen(0, '127.0.0.1');
  await once(capture.server, 'listening');
  const { port } = capture.server.address() as AddressInfo;
  // the thread ends with the mailer; its server and connections with it
  capture.server.unref();
  // a few connections kept open and reused: a notice to a whole team is many messages at once
  const transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true, pool: true, maxConnections: 2, maxMessages: Infinity });
  return { transport, captured };
}

export default async function sendOne(task: MailTask): Promise<MailRecord> {
  const { transport, captured } = await (ready ??= start(task.smtpUrl));
  try {
    const info = await transport.sendMail({
      from: task.from,
      to: task.to,
      subject: task.subject,
      text: task.text,
      headers: task.analysisId ? { [ANALYSIS_HEADER]: String(task.analysisId) } : {},
    });
    const parsed = captured?.get(info.messageId);
    if (parsed) {
      captured!.delete(info.messageId);
      return parsed;
    }
    return { to: task.to, subject: task.subject, body: task.text, messageId: info.messageId, analysisId: task.analysisId, delivered: true };
  } catch (e) {
    return { to: task.to, subject: task.subject, body: task.text, analysisId: task.analysisId, delivered: false, error: e instanceof Error ? e.message : String(e) };
  }
}
