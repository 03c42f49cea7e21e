/**
 * A local SMTP catcher for the demo and the tests: a real SMTP server (RFC 5321) on 127.0.0.1
 * that accepts every message, parses it and keeps the newest ones in memory. It stands in for
 * the hospital's mail relay; nothing it holds leaves the process.
 */
import { randomUUID } from 'node:crypto';
import type { AddressInfo } from 'node:net';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';

export interface CaughtAttachment {
  filename: string;
  contentType: string;
  size: number;
  content: Buffer;
}

export interface CaughtMessage {
  id: string;
  /** The Message-ID header as sent, so a test can tell a resend of the same delivery. */
  messageId: string | null;
  from: string;
  to: string[];
  subject: string;
  text: string;
  receivedAt: Date;
  attachments: CaughtAttachment[];
  /** The message as it came over the wire (RFC 5322), for a check of everything it carries. */
  raw: Buffer;
}

export interface MailCatcherSettings {
  /** 0 asks the system for a free port (tests). */
  port: number;
  /** How many messages are kept; older ones are dropped. */
  keep: number;
  /** A larger message is refused with 552 (RFC 5321 §4.5.3.1.10). */
  maxMessageBytes: number;
  /** The most bytes (as sent) the kept messages may hold together; older ones are dropped. */
  keepBytes: number;
}

/** What the demo and the tests keep: the newest 200 messages, and at most 64 MiB of them. */
export const mailCatcherLimits: Omit<MailCatcherSettings, 'port'> = {
  keep: 200,
  maxMessageBytes: 5 * 1024 * 1024,
  keepBytes: 64 * 1024 * 1024,
};

export function mailCatcherSettingsFromEnvironment(env = process.env): MailCatcherSettings {
  return { port: Number(env.MAIL_CATCHER_PORT ?? 4325), ...mailCatcherLimits };
}

export class MailCatcher {
  private readonly messages: CaughtMessage[] = [];

  private constructor(
    private readonly server: SMTPServer,
    readonly port: number,
    private readonly settings: MailCatcherSettings,
  ) {}

  /** Starts listening on 127.0.0.1 only (never reachable from another machine). */
  static async start(
    settings: MailCatcherSettings,
    log: (message: string, error?: unknown) => void = () => undefined,
  ): Promise<MailCatcher> {
    let catcher: MailCatcher | null = null;
    const server = new SMTPServer({
      // A local fake: no authentication and no TLS (nodemailer is told to ignore STARTTLS).
      authOptional: true,
      disabledCommands: ['STARTTLS', 'AUTH'],
      size: settings.maxMessageBytes,
      logger: false,
      banner: 'Emberline local mail catcher',
      onData(stream, _session, callback) {
        const chunks: Buffer[] = [];
        let size = 0;
        stream.on('data', (chunk: Buffer) => {
          size += chunk.length;
          if (size <= settings.maxMessageBytes) chunks.push(chunk);
        });
        stream.on('end', () => {
          if (stream.sizeExceeded || size > settings.maxMessageBytes) {
            const error = new Error('Message exceeds the size this catcher accepts') as Error & {
              responseCode: number;
            };
            error.responseCode = 552;
            callback(error);
            return;
          }
          const raw = Buffer.concat(chunks);
          simpleParser(raw)
            .then((parsed) => {
              catcher?.keep({
                id: randomUUID(),
                messageId: parsed.messageId ?? null,
                from: addressesOf(parsed.from)[0] ?? '',
                to: addressesOf(parsed.to),
                subject: parsed.subject ?? '',
                text: parsed.text ?? '',
                receivedAt: new Date(),
                attachments: parsed.attachments.map((attachment) => ({
                  filename: attachment.filename ?? 'attachment',
                  contentType: attachment.contentType,
                  size: attachment.content.length,
                  content: attachment.content,
                })),
                raw,
              });
              callback();
            })
            .catch((error: unknown) => {
              log('The mail catcher could not parse a message', error);
              callback(error instanceof Error ? error : new Error('unparsable message'));
            });
        });
      },
    });
    // A port already taken rejects here; later errors are only logged.
    const port = await new Promise<number>((resolve, reject) => {
      server.once('error', reject);
      server.listen(settings.port, '127.0.0.1', () => {
        server.off('error', reject);
        resolve((server.server.address() as AddressInfo).port);
      });
    });
    server.on('error', (error) => log('The mail catcher failed', error));
    catcher = new MailCatcher(server, port, settings);
    return catcher;
  }

  /** The URL nodemailer sends to. */
  get url(): string {
    return `smtp://127.0.0.1:${this.port}`;
  }

  /** Newest first. */
  list(): readonly CaughtMessage[] {
    return this.messages;
  }

  find(id: string): CaughtMessage | undefined {
    return this.messages.find((message) => message.id === id);
  }

  clear(): void {
    this.messages.length = 0;
  }

  async close(): Promise<void> {
    await new Promise<void>((resolve) => this.server.close(() => resolve()));
  }

  private keep(message: CaughtMessage): void {
    this.messages.unshift(message);
    if (this.messages.length > this.settings.keep) this.messages.length = this.settings.keep;
    // A memory bound as well as a count: 200 messages near the size limit would hold a gigabyte.
    let bytes = 0;
    const kept = this.messages.findIndex((caught) => {
      bytes += caught.raw.length;
      return bytes > this.settings.keepBytes;
    });
    if (kept > 0) this.messages.length = kept;
  }
}

function addressesOf(field: AddressObject | AddressObject[] | undefined): string[] {
  if (!field) return [];
  return (Array.isArray(field) ? field : [field]).flatMap((entry) =>
    entry.value.flatMap((address) => (address.address ? [address.address] : [])),
  );
}

/**
 * The demo's catcher, as `main.ts` starts it: none when `SMTP_URL` names a real relay or in
 * production. When the port is taken (a second server process of the same demo, whose first
 * process already catches), this process sends there too and shows no mailbox of its own.
 */
export async function startDemoMailCatcher(
  env: NodeJS.ProcessEnv,
  log: (message: string, error?: unknown) => void,
): Promise<{ catcher: MailCatcher | null; url: string | null }> {
  if (env.SMTP_URL || env.NODE_ENV === 'production') return { catcher: null, url: null };
  const settings = mailCatcherSettingsFromEnvironment(env);
  try {
    const catcher = await MailCatcher.start(settings, log);
    return { catcher, url: catcher.url };
  } catch (error) {
    if ((error as { code?: unknown }).code !== 'EADDRINUSE') throw error;
    return { catcher: null, url: `smtp://127.0.0.1:${settings.port}` };
  }
}
