import nodemailer from 'nodemailer';
import { afterEach, describe, expect, it } from 'vitest';
import { startFakeSmtp, type FakeSmtp } from './fake-smtp';
import type { StoredMail } from './stored-mail';

let server: FakeSmtp | undefined;
afterEach(async () => {
  await server?.close();
  server = undefined;
});

describe('startFakeSmtp', () => {
  it('listens on an ephemeral loopback port and stores what nodemailer sends', async () => {
    const got: StoredMail[] = [];
    server = await startFakeSmtp({ port: 0, onMessage: (m) => void got.push(m), now: () => new Date('2025-01-02T03:04:05Z') });
    expect(server.port).toBeGreaterThan(0);
    expect(server.url).toBe(`smtp://127.0.0.1:${server.port}`);
    const t = nodemailer.createTransport(server.url);
    await t.sendMail({
      from: '"Stillpoint" <noreply@works.example.test>',
      to: 'tech@works.example.test',
      bcc: 'archive@works.example.test',
      subject: 'Assigned to you: PT-204',
      text: 'Due 2025-02-01.',
      html: '<p>Due 2025-02-01.</p>',
    });
    expect(got).toHaveLength(1);
    const m = got[0]!;
    expect(m.id).toMatch(/^[0-9a-f-]{36}$/);
    expect(m.receivedAt).toBe('2025-01-02T03:04:05.000Z');
    expect(m.from).toBe('Stillpoint <noreply@works.example.test>');
    expect(m.to).toEqual(['tech@works.example.test', 'archive@works.example.test']);
    expect(m.subject).toBe('Assigned to you: PT-204');
    expect(m.text).toBe('Due 2025-02-01.');
    expect(m.html).toBe('<p>Due 2025-02-01.</p>');
    expect(m.messageId).toMatch(/@/);
    expect(m.raw).toContain('Subject: Assigned to you: PT-204');
    expect(m.raw).not.toMatch(/^Bcc:/im);
  });

  it('refuses with a temporary error when storing fails, so the sender can retry', async () => {
    server = await startFakeSmtp({
      onMessage: () => {
        throw new Error('disk full');
      },
    });
    const t = nodemailer.createTransport(server.url);
    await expect(t.sendMail({ from: 'a@example.test', to: 'b@example.test', subject: 's', text: 't' })).rejects.toMatchObject({ responseCode: 451 });
  });

  it('refuses a message over the size limit with 552', async () => {
    const got: StoredMail[] = [];
    server = await startFakeSmtp({ maxMessageBytes: 2048, onMessage: (m) => void got.push(m) });
    const t = nodemailer.createTransport(server.url);
    await expect(t.sendMail({ from: 'a@example.test', to: 'b@example.test', subject: 's', text: 'x'.repeat(10_000) })).rejects.toMatchObject({
      responseCode: 552,
    });
    expect(got).toHaveLength(0);
  });
});
