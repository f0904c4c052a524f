import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import { randomUUID } from 'node:crypto';
import type { AddressInfo } from 'node:net';
import { WORKSPACE_HEADER } from './mail.ts';

export interface CapturedMail {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
  workspaceId: string | null;
}

export interface Mailbox {
  list(): CapturedMail[];
}

export interface MailCatcher extends Mailbox {
  port: number;
  close(): Promise<void>;
}

const KEEP = 500;

/**
 * A local SMTP server that keeps every message it receives in memory (newest first), so the demo can
 * show invitation mail without a real mail service. Listens on 127.0.0.1 only.
 */
export async function startMailCatcher(opts: { port: number; host?: string }): Promise<MailCatcher> {
  const messages: CapturedMail[] = [];
  const server = new SMTPServer({
    secure: false,
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    logger: false,
    size: 5 * 1024 * 1024,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          const header = parsed.headers.get(WORKSPACE_HEADER.toLowerCase());
          messages.unshift({
            id: randomUUID(),
            receivedAt: new Date().toISOString(),
            from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            workspaceId: typeof header === 'string' ? header : null,
          });
          messages.length = Math.min(messages.length, KEEP);
          callback();
        })
        .catch((err: Error) => callback(err));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port, opts.host ?? '127.0.0.1', () => {
      server.off('error', reject);
      // A client that drops its connection (a worker killed mid-send) emits an error here; without a
      // listener it would end the whole process.
      server.on('error', () => {});
      resolve();
    });
  });
  const address = (server as unknown as { server: { address(): AddressInfo } }).server.address();
  return {
    port: address.port,
    list: () => [...messages],
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
