// E-mail through nodemailer (DESIGN §6). With SMTP_URL unset, messages go to an in-process fake
// SMTP server (smtp-server) on 127.0.0.1 that keeps what it receives in memory, so an admin can
// read them in the app (development and tests only; never in production).
import { AsyncResource } from 'node:async_hooks';
import type { AddressInfo } from 'node:net';
import nodemailer, { type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import type { Logger } from 'pino';

export interface MailMessage {
  id: number;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
  raw: string;
}

export interface OutgoingMail {
  to: string[];
  subject: string;
  text: string;
}

const FROM = 'Ligandry <no-reply@ligandry.invalid>';
const KEEP = 500;

function header(raw: string, name: string): string {
  const head = raw.split(/\r?\n\r?\n/, 1)[0];
  const unfolded = head.replace(/\r?\n[ \t]+/g, ' ');
  const match = new RegExp(`^${name}:\\s*(.*)$`, 'im').exec(unfolded);
  return match ? match[1].trim() : '';
}

/** Decodes RFC 2047 encoded words (=?UTF-8?Q?…?= / =?UTF-8?B?…?=) that nodemailer writes for non-ASCII subjects. */
function decodeWords(value: string): string {
  return value.replace(/=\?utf-8\?([qb])\?([^?]*)\?=\s*/gi, (_m, enc: string, text: string) => {
    if (enc.toLowerCase() === 'b') return Buffer.from(text, 'base64').toString('utf8');
    return Buffer.from(text.replace(/_/g, ' ').replace(/=([0-9a-f]{2})/gi, (_x, h: string) => String.fromCharCode(parseInt(h, 16))), 'latin1').toString('utf8');
  });
}

function decodeBody(raw: string): string {
  const [head, ...rest] = raw.split(/\r?\n\r?\n/);
  const body = rest.join('\n\n');
  const encoding = header(head, 'Content-Transfer-Encoding').toLowerCase();
  if (encoding === 'quoted-printable') {
    const bytes = body.replace(/=\r?\n/g, '').replace(/=([0-9A-F]{2})/gi, (_m, h: string) => String.fromCharCode(parseInt(h, 16)));
    return Buffer.from(bytes, 'latin1').toString('utf8');
  }
  if (encoding === 'base64') return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8');
  return body;
}

export class Mailer {
  private readonly received: MailMessage[] = [];
  private nextId = 1;
  private transport?: Promise<Transporter>;
  private server?: SMTPServer;

  constructor(
    private readonly logger: Logger,
    private readonly smtpUrl?: string,
  ) {}

  /** True when messages go to the in-process fake server (and can be read in the app). */
  get isFake(): boolean {
    return !this.smtpUrl;
  }

  /** Messages the fake server received, newest first. */
  messages(): MailMessage[] {
    return [...this.received].reverse();
  }

  /** Sends now; resolves when the server accepted the message. */
  async send(mail: OutgoingMail): Promise<void> {
    if (!mail.to.length) return;
    const transport = await this.getTransport();
    await transport.sendMail({ from: FROM, to: mail.to, subject: mail.subject, text: mail.text });
  }

  /** Sends in the background (after the change was committed); failures are logged, never thrown. */
  sendLater(mail: OutgoingMail): void {
    this.send(mail).catch((err: unknown) => this.logger.error({ err, subject: mail.subject }, 'could not send an e-mail'));
  }

  async close(): Promise<void> {
    const server = this.server;
    this.server = undefined;
    this.transport = undefined;
    if (server) await new Promise<void>((resolve) => server.close(() => resolve()));
  }

  private getTransport(): Promise<Transporter> {
    this.transport ??= this.smtpUrl ? Promise.resolve(nodemailer.createTransport(this.smtpUrl)) : this.startFake();
    return this.transport;
  }

  private async startFake(): Promise<Transporter> {
    const server = new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS'],
      logger: false,
      banner: 'Ligandry fake SMTP (development)',
      onData: (stream, session, callback) => {
        const chunks: Buffer[] = [];
        stream.on('data', (c: Buffer) => chunks.push(c));
        stream.on('end', AsyncResource.bind(() => {
          const raw = Buffer.concat(chunks).toString('utf8');
          this.received.push({
            id: this.nextId++,
            receivedAt: new Date().toISOString(),
            from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: decodeWords(header(raw, 'Subject')),
            text: decodeBody(raw),
            raw,
          });
          if (this.received.length > KEEP) this.received.shift();
          callback();
        }));
      },
    });
    this.server = server;
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      server.listen(0, '127.0.0.1', () => resolve());
    });
    const { port } = server.server.address() as AddressInfo;
    this.logger.info(`fake SMTP server on 127.0.0.1:${port} (messages readable by admins in the app)`);
    return nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true });
  }
}
