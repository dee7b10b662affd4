import nodemailer, { type SendMailOptions } from 'nodemailer';
import { describe, expect, it } from 'vitest';
import { parseMail } from './parse-mail';

/** Compose a message exactly as nodemailer would send it, without any network. */
async function compose(mail: SendMailOptions): Promise<Buffer> {
  const t = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: 'windows' });
  const info = await t.sendMail(mail);
  return info.message as Buffer;
}

describe('parseMail on nodemailer output', () => {
  it('reads headers, a UTF-8 subject and a quoted-printable text body', async () => {
    const text = `Température 21 °C, ±0.25 % of span — ${'long line '.repeat(20)}end`;
    const raw = await compose({
      from: '"Stillpoint Outbox" <noreply@works.example.test>',
      to: ['"Tech, One" <tech@works.example.test>', 'lead@works.example.test'],
      cc: 'auditor@works.example.test',
      subject: 'Prêt pour revue : FT-101 ✓',
      text,
      date: new Date('2025-03-14T09:30:00Z'),
      messageId: '<abc123@works.example.test>',
    });
    expect(raw.toString('latin1')).toMatch(/quoted-printable|base64/i);
    const m = await parseMail(raw);
    expect(m.from).toBe('Stillpoint Outbox <noreply@works.example.test>');
    expect(m.to).toEqual(['tech@works.example.test', 'lead@works.example.test', 'auditor@works.example.test']);
    expect(m.subject).toBe('Prêt pour revue : FT-101 ✓');
    expect(m.date).toBe('2025-03-14T09:30:00.000Z');
    expect(m.messageId).toBe('abc123@works.example.test');
    expect(m.text).toBe(text);
    expect(m.html).toBeUndefined();
  });

  it('reads base64 text and the HTML alternative, and skips attachments', async () => {
    const raw = await compose({
      from: 'a@example.test',
      to: 'b@example.test',
      subject: 'plain',
      text: 'Zeile eins\nÜber zwei',
      html: '<p>Über <b>zwei</b></p>',
      textEncoding: 'base64',
      attachments: [{ filename: 'trace.csv', content: 't,v\n1,2\n', contentType: 'text/csv' }],
    });
    const m = await parseMail(raw);
    expect(m.text.replace(/\r\n/g, '\n')).toBe('Zeile eins\nÜber zwei');
    expect(m.html).toBe('<p>Über <b>zwei</b></p>');
  });

  it('reads a 7bit ASCII message with LF line ends', async () => {
    const raw = 'From: x@example.test\nTo: y@example.test\nSubject: hi\n  there\n\nbody line\n';
    const m = await parseMail(raw);
    expect(m.subject).toBe('hi there'); // a folded header, unfolded (RFC 5322 §2.2.3; mailparser collapses the folding white space)
    expect(m.text).toBe('body line');
    expect(m.date).toBeUndefined();
  });
});

describe('MIME pieces', () => {
  it('joins adjacent encoded words and decodes Q underscores (RFC 2047 §6.2)', async () => {
    const m = await parseMail('From: a@x.test\r\nSubject: =?UTF-8?Q?Caf=C3=A9_au?= =?UTF-8?B?bGFpdA==?= ok\r\n\r\nb\r\n');
    expect(m.subject).toBe('Café aulait ok');
    const l = await parseMail('From: a@x.test\r\nSubject: =?ISO-8859-1?Q?=E9t=E9?=\r\n\r\nb\r\n');
    expect(l.subject).toBe('été');
  });
  it('removes soft line breaks in quoted-printable (RFC 2045 §6.7)', async () => {
    const m = await parseMail('From: a@x.test\r\nContent-Type: text/plain; charset=utf-8\r\nContent-Transfer-Encoding: quoted-printable\r\n\r\nab=\r\ncd=3D=C3=A9\r\n');
    expect(m.text).toBe('abcd=é');
  });
  it('extracts bare addresses, commas inside quotes kept together', async () => {
    const m = await parseMail('From: a@x.test\r\nTo: "Doe, J" <j@x.test>, k@y.test, undisclosed-recipients:;\r\n\r\nb\r\n');
    expect(m.to).toEqual(['j@x.test', 'k@y.test']);
  });
});
