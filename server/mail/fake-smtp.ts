/**
 * A local SMTP server that accepts every message and hands it, parsed, to a callback. It starts
 * with the app when no `SMTP_URL` is configured, so mail can be read on the Outbox page. Loopback
 * only by default; no TLS and no authentication, which is why it must not listen on a public
 * interface.
 */
import { randomUUID } from 'node:crypto';
import type { AddressInfo } from 'node:net';
import { SMTPServer } from 'smtp-server';
import { parseMail } from './parse-mail';
import type { StoredMail } from './stored-mail';

/** Options of {@link startFakeSmtp}. */
export interface FakeSmtpOptions {
  /** TCP port; 0 (the default) picks a free one. */
  port?: number;
  /** Interface to bind; default 127.0.0.1. */
  host?: string;
  /** Largest accepted message in bytes; default 10 MiB. Larger ones are refused with 552. */
  maxMessageBytes?: number;
  /**
   * Called once per received message. When it throws or rejects the message is refused with a
   * temporary error (451), so the sender keeps it and retries.
   */
  onMessage(msg: StoredMail): void | Promise<void>;
  /** Clock for `receivedAt`; default `() => new Date()`. */
  now?: () => Date;
  /** Server and connection errors after start (a client hanging up mid-command); default ignored. */
  onError?: (err: Error) => void;
}

/** A running fake SMTP server. */
export interface FakeSmtp {
  port: number;
  /** `smtp://HOST:PORT`, usable as a nodemailer transport URL. */
  url: string;
  /** Stop listening; open connections get at most one second to finish. */
  close(): Promise<void>;
}

/** Default size limit: 10 MiB. */
export const DEFAULT_MAX_MESSAGE_BYTES = 10 * 1024 * 1024;

/** Start the fake SMTP server; resolves once it listens. */
export async function startFakeSmtp(options: FakeSmtpOptions): Promise<FakeSmtp> {
  const host = options.host ?? '127.0.0.1';
  const now = options.now ?? (() => new Date());
  const server = new SMTPServer({
    name: 'stillpoint-outbox',
    banner: 'Stillpoint local outbox',
    secure: false,
    // No STARTTLS: the fake is for loopback, and nodemailer would otherwise try to upgrade.
    disabledCommands: ['STARTTLS'],
    authOptional: true,
    size: options.maxMessageBytes ?? DEFAULT_MAX_MESSAGE_BYTES,
    logger: false,
    closeTimeout: 1000,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('error', (err) => callback(err));
      stream.on('end', () => {
        if (stream.sizeExceeded) {
          const err = Object.assign(new Error('Message exceeds the size limit'), { responseCode: 552 });
          callback(err);
          return;
        }
        const raw = Buffer.concat(chunks);
        void (async () => {
          let msg: StoredMail;
          try {
            const parsed = await parseMail(raw);
            const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
            msg = {
              id: randomUUID(),
              receivedAt: now().toISOString(),
              from: parsed.from || (session.envelope.mailFrom ? session.envelope.mailFrom.address : ''),
              to: envelopeTo.length > 0 ? envelopeTo : parsed.to,
              subject: parsed.subject,
              text: parsed.text,
              ...(parsed.html !== undefined ? { html: parsed.html } : {}),
              ...(parsed.messageId ? { messageId: parsed.messageId } : {}),
              raw: raw.toString('utf8'),
            };
          } catch (err) {
            callback(Object.assign(new Error(`Could not read the message: ${(err as Error).message}`), { responseCode: 554 }));
            return;
          }
          try {
            await options.onMessage(msg);
            callback(null, `Queued as ${msg.id}`);
          } catch (err) {
            callback(Object.assign(new Error(`Could not store the message: ${String((err as Error)?.message ?? err)}`), { responseCode: 451 }));
          }
        })();
      });
    },
  });

  await new Promise<void>((resolve, reject) => {
    const onError = (err: Error) => reject(err);
    server.once('error', onError);
    server.listen(options.port ?? 0, host, () => {
      server.off('error', onError);
      resolve();
    });
  });
  // Connection-level errors must not crash the process: an 'error' event without a listener would.
  server.on('error', (err: Error) => options.onError?.(err));

  const port = (server.server.address() as AddressInfo).port;
  const urlHost = host.includes(':') ? `[${host}]` : host;
  let closed: Promise<void> | undefined;
  return {
    port,
    url: `smtp://${urlHost}:${port}`,
    close() {
      closed ??= new Promise<void>((resolve) => server.close(() => resolve()));
      return closed;
    },
  };
}
