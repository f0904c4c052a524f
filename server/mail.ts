import nodemailer from 'nodemailer';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
  /** Tags the message with the workspace it was sent for (the demo mail page filters by it). */
  workspaceId?: string;
}

export interface Mailer {
  send(mail: OutgoingMail): Promise<void>;
}

export const WORKSPACE_HEADER = 'X-Bleedwright-Workspace';

/** nodemailer over plain SMTP to a local server (the mail catcher in the demo). */
export function createSmtpMailer(opts: { host: string; port: number; from: string }): Mailer {
  const transport = nodemailer.createTransport({ host: opts.host, port: opts.port, secure: false, ignoreTLS: true });
  return {
    async send(mail) {
      await transport.sendMail({
        from: opts.from,
        to: mail.to,
        subject: mail.subject,
        text: mail.text,
        html: mail.html,
        headers: mail.workspaceId ? { [WORKSPACE_HEADER]: mail.workspaceId } : undefined,
      });
    },
  };
}
