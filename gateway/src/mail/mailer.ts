/** Outgoing mail through nodemailer's SMTP transport (the mock EHR's catcher locally). */
import nodemailer from 'nodemailer';
import type { Config } from '../config/schema';

export interface MailMessage {
  to: string[];
  subject: string;
  text: string;
  /** RFC 5322 Message-ID (`<…@…>`): the same for a resend, so mail clients and people see it is one mail. */
  messageId?: string;
}

export interface Mailer {
  send(message: MailMessage): Promise<void>;
  close(): void;
}

export function createMailer(cfg: Config['mail']): Mailer {
  // The local catcher offers no usable STARTTLS (toolchain.md): plain SMTP on loopback only.
  const local = cfg.smtpHost === '127.0.0.1' || cfg.smtpHost === 'localhost';
  const transport = nodemailer.createTransport({
    host: cfg.smtpHost,
    port: cfg.smtpPort,
    secure: false,
    ignoreTLS: local,
    connectionTimeout: 5000,
    greetingTimeout: 5000,
    socketTimeout: 10_000,
  });
  return {
    async send(m) {
      await transport.sendMail({ from: cfg.from, to: m.to.join(', '), subject: m.subject, text: m.text, ...(m.messageId ? { messageId: m.messageId } : {}) });
    },
    close: () => transport.close(),
  };
}

/** The domain for Message-IDs: the sender's, else a local one (RFC 5322 §3.6.4 wants it unique to us). */
export function messageIdDomain(from: string): string {
  const m = /@([A-Za-z0-9.-]+)>?\s*$/.exec(from);
  return m?.[1] ?? 'ebbgate.invalid';
}
