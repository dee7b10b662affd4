/**
 * Reads a message received by the local fake SMTP server into what the Outbox shows, with
 * `mailparser` (from the maintainers of nodemailer and smtp-server): headers with RFC 2047 encoded
 * words, `multipart/*` nesting, every transfer encoding and charset. Attachments are not kept.
 */
import { simpleParser, type AddressObject } from 'mailparser';

/** What the Outbox needs from one message. */
export interface ParsedMail {
  /** The From header, decoded (display name and address). */
  from: string;
  /** Addresses from the To and Cc headers, bare (`a@example.test`). */
  to: string[];
  subject: string;
  /** The Date header as an ISO string, when present and parseable. */
  date?: string;
  /** The Message-ID header without its angle brackets. */
  messageId?: string;
  text: string;
  html?: string;
}

const list = (a: AddressObject | AddressObject[] | undefined): AddressObject[] => (a ? (Array.isArray(a) ? a : [a]) : []);

/** Bare addresses of address headers, groups flattened, in order. */
function addresses(...headers: (AddressObject | AddressObject[] | undefined)[]): string[] {
  const out: string[] = [];
  const walk = (v: AddressObject['value']) => {
    for (const e of v) {
      if (e.address) out.push(e.address);
      if (e.group) walk(e.group);
    }
  };
  for (const h of headers) for (const a of list(h)) walk(a.value);
  return out;
}

/** Parses one raw message. */
export async function parseMail(raw: Buffer | string): Promise<ParsedMail> {
  const m = await simpleParser(raw, { skipImageLinks: true, skipTextToHtml: true, skipTextLinks: true, keepCidLinks: true });
  const fromEntry = list(m.from)[0]?.value[0];
  const from = fromEntry ? (fromEntry.name ? `${fromEntry.name} <${fromEntry.address ?? ''}>` : (fromEntry.address ?? '')) : '';
  return {
    from,
    to: addresses(m.to, m.cc),
    subject: m.subject ?? '',
    ...(m.date && !Number.isNaN(m.date.getTime()) && m.headers.has('date') ? { date: m.date.toISOString() } : {}),
    ...(m.messageId ? { messageId: m.messageId.replace(/^<|>$/g, '') } : {}),
    text: (m.text ?? '').replace(/\r?\n$/, ''),
    ...(typeof m.html === 'string' ? { html: m.html } : {}),
  };
}
