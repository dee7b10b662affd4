import net from 'node:net';
import { afterEach, describe, expect, it } from 'vitest';
import { startFakeSmtp } from './fake-smtp';
import { createMailer, type GiveUpEvent, type Mailer, type MailLogger, type RetryEvent } from './mailer';
import type { StoredMail } from './stored-mail';

const open: { close(): Promise<void> }[] = [];
afterEach(async () => {
  for (const o of open.splice(0).reverse()) await o.close();
});

function track<T extends { close(): Promise<void> }>(x: T): T {
  open.push(x);
  return x;
}

/** A port that nothing listens on (bound, read, released). */
async function freePort(): Promise<number> {
  const s = net.createServer();
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
  const port = (s.address() as net.AddressInfo).port;
  await new Promise<void>((r) => s.close(() => r()));
  return port;
}

function memoryLogger() {
  const lines: { level: string; msg: string; obj: object }[] = [];
  const logger: MailLogger = {
    info: (obj, msg) => void lines.push({ level: 'info', msg, obj }),
    warn: (obj, msg) => void lines.push({ level: 'warn', msg, obj }),
    error: (obj, msg) => void lines.push({ level: 'error', msg, obj }),
  };
  return { logger, lines };
}

describe('createMailer', () => {
  it('delivers through the fake SMTP server; send() returns before delivery', async () => {
    const got: StoredMail[] = [];
    const smtp = track(await startFakeSmtp({ onMessage: (m) => void got.push(m) }));
    const delivered: string[] = [];
    const mailer: Mailer = track(
      createMailer({ smtpUrl: smtp.url, from: '"Stillpoint" <noreply@works.example.test>', onDelivered: (e) => void delivered.push(e.id) }),
    );
    const id = mailer.send({ to: ['tech@works.example.test'], subject: 'Approved: FT-101', text: 'Signed.', html: '<p>Signed.</p>' });
    expect(got).toHaveLength(0);
    expect(mailer.pending()).toBe(1);
    await mailer.flush();
    expect(mailer.pending()).toBe(0);
    expect(delivered).toEqual([id]);
    expect(got).toHaveLength(1);
    expect(got[0]).toMatchObject({
      from: 'Stillpoint <noreply@works.example.test>',
      to: ['tech@works.example.test'],
      subject: 'Approved: FT-101',
      text: 'Signed.',
      html: '<p>Signed.</p>',
    });
  });

  it('retries with backoff while the server is down and delivers once it is up', async () => {
    const port = await freePort();
    const { logger, lines } = memoryLogger();
    const retries: RetryEvent[] = [];
    let firstFailure!: () => void;
    const failedOnce = new Promise<void>((r) => (firstFailure = r));
    const mailer = track(
      createMailer({
        smtpUrl: `smtp://127.0.0.1:${port}`,
        from: 'noreply@works.example.test',
        logger,
        retry: { attempts: 6, baseDelayMs: 50 },
        onRetry: (e) => {
          retries.push(e);
          firstFailure();
        },
      }),
    );
    expect(() => mailer.send({ to: 'lead@works.example.test', subject: 'Ready for review: PT-204', text: 'x' })).not.toThrow();
    await failedOnce;
    const got: StoredMail[] = [];
    track(await startFakeSmtp({ port, onMessage: (m) => void got.push(m) }));
    await mailer.flush();
    expect(got.map((m) => m.subject)).toEqual(['Ready for review: PT-204']);
    expect(retries.length).toBeGreaterThanOrEqual(1);
    expect(retries[0]).toMatchObject({ attempt: 1, delayMs: 50 });
    if (retries[1]) expect(retries[1].delayMs).toBe(100);
    expect(lines.some((l) => l.level === 'warn' && /will retry/.test(l.msg))).toBe(true);
    expect(lines.some((l) => l.level === 'info' && /delivered/.test(l.msg))).toBe(true);
  });

  it('gives up after the set number of attempts and reports it', async () => {
    const port = await freePort();
    const gaveUp: GiveUpEvent[] = [];
    const { logger, lines } = memoryLogger();
    const mailer = track(
      createMailer({ smtpUrl: `smtp://127.0.0.1:${port}`, from: 'noreply@works.example.test', logger, retry: { attempts: 3, baseDelayMs: 10 }, onGiveUp: (e) => void gaveUp.push(e) }),
    );
    mailer.send({ to: 'x@works.example.test', subject: 's', text: 't' });
    await mailer.flush();
    expect(gaveUp).toHaveLength(1);
    expect(gaveUp[0]).toMatchObject({ reason: 'attempts_exhausted', attempts: 3 });
    expect(gaveUp[0]!.error).toBeInstanceOf(Error);
    expect(lines.filter((l) => l.level === 'warn')).toHaveLength(2);
    expect(lines.some((l) => l.level === 'error' && /giving up/.test(l.msg))).toBe(true);
  });

  it('does not retry a permanent (5xx) refusal', async () => {
    const smtp = track(await startFakeSmtp({ maxMessageBytes: 1024, onMessage: () => {} }));
    const gaveUp: GiveUpEvent[] = [];
    const mailer = track(createMailer({ smtpUrl: smtp.url, from: 'noreply@works.example.test', retry: { baseDelayMs: 10 }, onGiveUp: (e) => void gaveUp.push(e) }));
    mailer.send({ to: 'x@works.example.test', subject: 'big', text: 'y'.repeat(5000) });
    await mailer.flush();
    expect(gaveUp).toMatchObject([{ reason: 'permanent_failure', attempts: 1 }]);
  });

  it('close() gives up on what cannot be delivered in time, and later sends are reported, not thrown', async () => {
    const port = await freePort();
    const gaveUp: GiveUpEvent[] = [];
    const mailer = createMailer({ smtpUrl: `smtp://127.0.0.1:${port}`, from: 'n@works.example.test', retry: { baseDelayMs: 10_000 }, onGiveUp: (e) => void gaveUp.push(e) });
    mailer.send({ to: 'x@works.example.test', subject: 'a', text: 't' });
    await mailer.close({ timeoutMs: 200 });
    expect(gaveUp.map((e) => e.reason)).toEqual(['closed']);
    expect(() => mailer.send({ to: 'x@works.example.test', subject: 'b', text: 't' })).not.toThrow();
    expect(gaveUp.map((e) => e.reason)).toEqual(['closed', 'closed']);
    expect(mailer.pending()).toBe(0);
  });
});
