import type { AddressInfo } from 'node:net';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';

// An SMTP catcher: accepts every message on loopback and keeps it in memory, parsed with mailparser.
// STARTTLS is disabled: smtp-server's built-in certificate has expired (see toolchain notes),
// so clients must connect in plain text (nodemailer: ignoreTLS: true).

export interface CaughtMail {
  id: number;
  receivedAt: string;
  envelopeFrom: string | null;
  envelopeTo: string[];
  from: string;
  to: string[];
  subject: string;
  text: string;
  date: string | null;
  messageId: string | null;
}

function addresses(a: AddressObject | AddressObject[] | undefined): string[] {
  return (Array.isArray(a) ? a : a ? [a] : []).flatMap((o) => o.value.map((v) => v.address ?? v.name)).filter((s): s is string => !!s);
}

export class MailCatcher {
  private mails: CaughtMail[] = [];
  private nextId = 1;
  private server: SMTPServer | undefined;

  constructor(private readonly capacity = 500) {}

  async start(host: string, port: number): Promise<number> {
    const server = new SMTPServer({
      disabledCommands: ['STARTTLS', 'AUTH'],
      authOptional: true,
      logger: false,
      banner: 'Ebbgate mock EHR mail catcher',
      onData: (stream, session, callback) => {
        simpleParser(stream)
          .then((parsed) => {
            const from = session.envelope.mailFrom;
            this.keep({
              id: this.nextId++,
              receivedAt: new Date().toISOString(),
              envelopeFrom: from ? from.address : null,
              envelopeTo: session.envelope.rcptTo.map((r) => r.address),
              from: parsed.from?.text ?? '',
              to: addresses(parsed.to),
              subject: parsed.subject ?? '',
              text: parsed.text ?? '',
              date: parsed.date ? parsed.date.toISOString() : null,
              messageId: parsed.messageId ?? null,
            });
            callback();
          })
          .catch((err: Error) => callback(err));
      },
    });
    this.server = server;
    await new Promise<void>((resolve, reject) => {
      server.on('error', reject);
      server.listen(port, host, () => resolve());
    });
    return (server.server.address() as AddressInfo).port;
  }

  async stop(): Promise<void> {
    const s = this.server;
    this.server = undefined;
    if (s) await new Promise<void>((resolve) => s.close(() => resolve()));
  }

  list(): CaughtMail[] {
    return [...this.mails];
  }

  clear(): void {
    this.mails = [];
  }

  private keep(m: CaughtMail): void {
    this.mails.push(m);
    if (this.mails.length > this.capacity) this.mails.shift();
  }
}
